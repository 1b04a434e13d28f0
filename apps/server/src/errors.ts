import type { ErrorRequestHandler, RequestHandler } from "express";
import type { ErrorCode } from "@jogwright/shared";
import { ZodError } from "zod";
import { isDatabaseUnavailable } from "./db/connection.ts";

/** The one error type of the server: a code of the shared error shape, an HTTP status and a message. */
export class AppError extends Error {
  constructor(
    readonly status: number,
    readonly code: ErrorCode,
    message: string,
    readonly issues?: { path: string; message: string }[],
    readonly headers?: Record<string, string>,
  ) {
    super(message);
  }
}

export function issuesOf(error: ZodError): { path: string; message: string }[] {
  return error.issues.map((i) => ({ path: i.path.map(String).join("."), message: i.message }));
}

export function validationError(error: ZodError, what: string): AppError {
  const issues = issuesOf(error);
  const first = issues[0];
  const summary = first ? `${first.path ? `${first.path}: ` : ""}${first.message}` : "invalid input";
  return new AppError(400, "validation_failed", `The ${what} is not valid — ${summary}.`, issues);
}

export const notFoundHandler: RequestHandler = (req, _res, next) => {
  next(new AppError(404, "not_found", `No API route ${req.method} ${req.path}.`));
};

/** Seconds a client is asked to wait before trying again while the database is unavailable (common practice, no source). */
const DATABASE_RETRY_AFTER_S = 5;
/** At most one log line per this many milliseconds while the database is unavailable: an outage is not a flood. */
const OUTAGE_LOG_INTERVAL_MS = 10_000;
let lastOutageLogAt = 0;

/** The one answer to any request that needed the database while it is unreachable or not answering. */
export function databaseUnavailableError(): AppError {
  return new AppError(
    503,
    "database_unavailable",
    "The database is not answering, so nothing can be read or saved right now; live jogging continues. Try again in a moment.",
    undefined,
    { "Retry-After": String(DATABASE_RETRY_AFTER_S) },
  );
}

/**
 * The one error handler: AppError as is, a lost database as 503 database_unavailable, body-parser failures
 * as 400, anything else as a logged 500.
 */
export const errorHandler: ErrorRequestHandler = (caught, _req, res, _next) => {
  let err = caught;
  if (isDatabaseUnavailable(err)) {
    const now = Date.now();
    if (now - lastOutageLogAt >= OUTAGE_LOG_INTERVAL_MS) {
      lastOutageLogAt = now;
      console.warn(`[jogwright] database unavailable: ${String(err?.parent?.message ?? err?.message ?? err).split("\n")[0]}`);
    }
    err = databaseUnavailableError();
  }
  if (err instanceof AppError) {
    if (err.headers) res.set(err.headers);
    res.status(err.status).json({ error: { code: err.code, message: err.message, ...(err.issues ? { issues: err.issues } : {}) } });
    return;
  }
  if (err instanceof ZodError) {
    const e = validationError(err, "request");
    res.status(400).json({ error: { code: e.code, message: e.message, issues: e.issues } });
    return;
  }
  const status = typeof err?.status === "number" ? err.status : typeof err?.statusCode === "number" ? err.statusCode : 500;
  if (status >= 400 && status < 500) {
    // body-parser: malformed JSON, wrong content type, body too large.
    const message =
      err?.type === "entity.parse.failed"
        ? "The request body is not valid JSON."
        : err?.type === "entity.too.large"
          ? "The request body is too large."
          : String(err?.message ?? "Bad request.");
    res.status(status).json({ error: { code: "bad_request", message } });
    return;
  }
  console.error("[jogwright] unexpected error:", err);
  res.status(500).json({ error: { code: "internal", message: "Something went wrong on the server; it has been logged." } });
};
