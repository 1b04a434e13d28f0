import type { ErrorRequestHandler, RequestHandler } from "express";
import type { ErrorCode } from "@jogwright/shared";
import { ZodError } from "zod";

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

/** The one error handler: AppError as is, body-parser failures as 400, anything else as a logged 500. */
export const errorHandler: ErrorRequestHandler = (err, _req, res, _next) => {
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
