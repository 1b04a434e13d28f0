import { expect, it } from "vitest";
import type { z } from "zod";

// For the form codecs' tests: a refused decode as the form shows it (zodResolver puts each issue on the
// field its dotted path names).

/** The dotted paths a refused decode names, in its order; none when it decoded. */
export const refusedPaths = (result: z.ZodSafeParseResult<unknown>): string[] => result.error?.issues.map((i) => i.path.join(".")) ?? [];

/** The form errors zodResolver would show: dotted path → message. */
export const messagesByPath = (result: z.ZodSafeParseResult<unknown>): Record<string, string> =>
  Object.fromEntries(result.error?.issues.map((i) => [i.path.join("."), i.message]) ?? []);

/**
 * The test every form codec with its own UI units has: the server's issue paths (SI, `fieldsByPath`' keys)
 * land on the form fields they name (undefined: on no field, so the message is shown as a whole).
 */
export function itPutsServerPathsOnFields(fieldOfPath: (path: string) => string | undefined, fieldsByPath: Record<string, string | undefined>): void {
  it("puts the server's issue paths on the form's fields", () => {
    for (const [path, field] of Object.entries(fieldsByPath)) expect(fieldOfPath(path), path).toBe(field);
  });
}
