import type { Request } from "express";
import type { z } from "zod";
import { AppError, validationError } from "../errors.ts";

/** Parse a request body with a shared zod schema; 400 with every issue when it does not fit. */
export function parseBody<S extends z.ZodType>(req: Request, schema: S): z.infer<S> {
  if (!req.is("application/json") && req.body === undefined) {
    throw new AppError(400, "bad_request", "Send a JSON body with Content-Type: application/json.");
  }
  const result = schema.safeParse(req.body ?? {});
  if (!result.success) throw validationError(result.error, "request body");
  return result.data;
}

export function parseParams<S extends z.ZodType>(req: Request, schema: S): z.infer<S> {
  const result = schema.safeParse(req.params);
  if (!result.success) throw validationError(result.error, "address");
  return result.data;
}

export function parseQuery<S extends z.ZodType>(req: Request, schema: S): z.infer<S> {
  const result = schema.safeParse(req.query);
  if (!result.success) throw validationError(result.error, "query");
  return result.data;
}
