import type { z } from "zod";

// For the form codecs' tests: a refused decode as the form shows it (zodResolver puts each issue on the
// field its dotted path names).

/** The dotted paths a refused decode names, in its order; none when it decoded. */
export const refusedPaths = (result: z.ZodSafeParseResult<unknown>): string[] => result.error?.issues.map((i) => i.path.join(".")) ?? [];

/** The form errors zodResolver would show: dotted path → message. */
export const messagesByPath = (result: z.ZodSafeParseResult<unknown>): Record<string, string> =>
  Object.fromEntries(result.error?.issues.map((i) => [i.path.join("."), i.message]) ?? []);
