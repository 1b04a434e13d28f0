import { z } from "zod";

/**
 * Control characters (C0 with CR, LF and tab; DEL; C1) and the Unicode line and paragraph separators.
 * In a name they would break a line of a list, a log entry or a mail header (a CR/LF in a profile name
 * lands in the subject of the review mail), or hide part of the text.
 */
const CONTROL_OR_LINE_BREAK = /[\p{Cc}\p{Zl}\p{Zp}]/u;

export const SINGLE_LINE_MESSAGE = "a name is one line, without line breaks, tabs or other control characters";

/** A name shown on one line (profile name, display name): trimmed, 1 to `max` characters, no control characters. */
export function singleLineName(opts: { requiredMessage: string; max: number }) {
  return z
    .string()
    .trim()
    .min(1, opts.requiredMessage)
    .max(opts.max, `at most ${opts.max} characters`)
    .refine((s) => !CONTROL_OR_LINE_BREAK.test(s), SINGLE_LINE_MESSAGE);
}
