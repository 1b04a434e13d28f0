import { z } from "zod";

/** Every `error.code` the API answers with. */
export const ERROR_CODES = [
  "bad_request",
  "validation_failed",
  "unauthenticated",
  "forbidden",
  "not_found",
  "conflict",
  "rate_limited",
  "bad_origin",
  "invalid_credentials",
  "account_inactive",
  "stale_parent",
  "ceiling_exceeded",
  "locked",
  "invalid_transition",
  /** A version is submitted without the evidence the site requires, or its evidence breaks the rule (issue 10). */
  "evidence_insufficient",
  /** Approving a version older than the profile's approved one rolls the operator back: the request must say `rollback: true` (issue 13). */
  "rollback_unconfirmed",
  "internal",
  "unavailable",
  /** MariaDB is stopped, paused or unreachable: 503; live jogging continues, saving waits (issue 11, item 5). */
  "database_unavailable",
] as const;
export type ErrorCode = (typeof ERROR_CODES)[number];

/** The one error shape every API route answers with; `code` is one of ERROR_CODES. */
export const apiErrorSchema = z.object({
  error: z.object({
    code: z.string(),
    message: z.string(),
    issues: z
      .array(z.object({ path: z.string(), message: z.string() }))
      .optional(),
  }),
});
export type ApiError = z.infer<typeof apiErrorSchema>;
