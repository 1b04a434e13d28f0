import { z } from "zod";

// Forms edit values in UI units (mm/s, deg, %) and the server takes SI (m/s, rad, fractions). Each such form
// has a zod codec (z.codec): decode = UI values → the SI request, encode = SI → UI values; react-hook-form
// validates with zodResolver(codec), so handleSubmit receives the decoded SI value. The helpers below are
// what the codecs share.

/**
 * "must be above zero" → "Must be above zero": a shared schema's message as a field's error text. A symbol
 * stays as it is ("ε must be …" does not become "Ε must be …").
 */
export const asSentence = (message: string): string => (/^[a-z]/.test(message) ? message.charAt(0).toUpperCase() + message.slice(1) : message);

/** "Enter a number in mm/s"; a unitless field ("—", as the tables show it) says "Enter a number". */
export const enterANumber = (unit?: string) => (unit && unit !== "—" ? `Enter a number in ${unit}` : "Enter a number");

/** A number input (react-hook-form's valueAsNumber gives NaN for an empty or non-numeric box). */
export const uiNumber = (unit?: string) => z.number({ error: enterANumber(unit) });

/**
 * Checks the SI candidate with the shared schema (the one the server applies) and puts each issue on the
 * UI field it concerns: the schema speaks SI paths ("tcpLinearMaxMPerS"), the form's fields carry UI names
 * ("tcpLinearMaxMmPerS"). `uiPathOf` returns a dotted UI path; "root" for an issue no field owns. Fields in
 * `alreadyFlagged` (e.g. an empty box that already says "Enter a number") get no second message.
 */
export function addSchemaIssuesAtUiPaths(
  schema: z.ZodType,
  candidate: unknown,
  ctx: z.RefinementCtx,
  uiPathOf: (siPath: string) => string,
  alreadyFlagged: Iterable<string> = [],
): void {
  const result = schema.safeParse(candidate);
  if (result.success) return;
  const seen = new Set<string>(alreadyFlagged);
  for (const issue of result.error.issues) {
    const uiPath = uiPathOf(issue.path.map(String).join("."));
    // One message per field: the first is the one to fix first.
    if (seen.has(uiPath)) continue;
    seen.add(uiPath);
    ctx.addIssue({ code: "custom", message: asSentence(issue.message), path: uiPath.split(".") });
  }
}
