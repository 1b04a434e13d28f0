import type { z } from "zod";
import { apiErrorSchema } from "@jogwright/shared";
import { reportDatabaseAvailable, reportDatabaseUnavailable } from "./database-status.ts";

/** One field problem reported by the server; `path` is dot-separated, e.g. "roles" or "roles.0". */
export interface ApiIssue {
  path: string;
  message: string;
}

/**
 * Every failed API call throws this. `status` is the HTTP status (0 when the server could not be reached);
 * `code`, `message` and `issues` come from the server's `{ error: { code, message, issues? } }` body.
 */
export class ApiRequestError extends Error {
  readonly status: number;
  readonly code: string;
  readonly issues: readonly ApiIssue[];

  constructor(status: number, code: string, message: string, issues: readonly ApiIssue[] = []) {
    super(message);
    this.name = "ApiRequestError";
    this.status = status;
    this.code = code;
    this.issues = issues;
  }
}

export function isApiRequestError(error: unknown): error is ApiRequestError {
  return error instanceof ApiRequestError;
}

type Method = "GET" | "POST" | "PATCH" | "PUT" | "DELETE";

interface RequestOptions<S extends z.ZodType | undefined> {
  method?: Method;
  body?: unknown;
  /** Parses the JSON answer; the result type follows the schema. */
  schema?: S;
  signal?: AbortSignal;
  /**
   * A request the page makes on a timer, not for something the person did: it never extends the sign-in
   * (the server's X-Jogwright-Background, session-check.ts), so a page left open still expires.
   */
  isBackground?: boolean;
}

type Result<S> = S extends z.ZodType ? z.output<S> : void;

/**
 * One request to the same-origin API with the session cookie: a network failure or a refusal becomes an
 * ApiRequestError, and the database banner follows the answer. State-changing requests always send JSON
 * (the server refuses other content types there).
 */
async function send(path: string, method: Method, body: unknown, signal: AbortSignal | undefined, headers: Record<string, string>): Promise<Response> {
  // A FormData body (a file upload) goes as multipart: the browser sets its Content-Type with the boundary.
  const isForm = body instanceof FormData;
  let response: Response;
  try {
    response = await fetch(path, {
      method,
      headers: method === "GET" || isForm ? headers : { ...headers, "Content-Type": "application/json" },
      credentials: "same-origin",
      body: method === "GET" ? undefined : isForm ? body : JSON.stringify(body ?? {}),
      signal,
    });
  } catch (cause) {
    if (cause instanceof DOMException && cause.name === "AbortError") throw cause;
    throw new ApiRequestError(0, "unavailable", "Cannot reach the Jogwright server. Check your connection and try again.");
  }
  if (!response.ok) {
    const error = await errorFromResponse(response);
    // The one place that learns the database is gone or back; the app shell shows a banner meanwhile.
    if (error.code === "database_unavailable") reportDatabaseUnavailable();
    throw error;
  }
  reportDatabaseAvailable();
  return response;
}

/**
 * POST `body` to a route that answers with server-sent events (text/event-stream) and return the stream;
 * a refusal before the stream throws as apiRequest's do. Aborting `signal` closes the request.
 */
export async function apiEventStream(path: string, body: unknown, signal?: AbortSignal): Promise<ReadableStream<Uint8Array>> {
  const response = await send(path, "POST", body, signal, { Accept: "text/event-stream" });
  if (!response.body) throw new ApiRequestError(response.status, "bad_response", "The server's stream has no body.");
  return response.body;
}

/**
 * POST a multipart form (a file upload: `POST /api/arms/upload`, the one route that takes one) and parse the
 * JSON answer with `schema`. The browser sets the multipart Content-Type with its boundary; failures throw
 * as apiRequest's do (a 422's issues in `issues`).
 */
export async function apiUpload<S extends z.ZodType>(path: string, form: FormData, schema: S, signal?: AbortSignal): Promise<z.output<S>> {
  const response = await send(path, "POST", form, signal, { Accept: "application/json" });
  const parsed = schema.safeParse(await response.json().catch(() => undefined));
  if (!parsed.success) throw new ApiRequestError(response.status, "bad_response", `The server's answer to POST ${path} does not have the expected shape.`);
  return parsed.data;
}

/**
 * Fetch wrapper for the same-origin Jogwright API. Sends and expects JSON, carries the session cookie,
 * validates the answer with the given shared schema and turns every failure into an ApiRequestError.
 */
export async function apiRequest<S extends z.ZodType | undefined = undefined>(
  path: string,
  options: RequestOptions<S> = {},
): Promise<Result<S>> {
  const { method = "GET", body, schema, signal, isBackground = false } = options;
  const response = await send(path, method, body, signal, { Accept: "application/json", ...(isBackground ? { "X-Jogwright-Background": "1" } : {}) });
  if (response.status === 204 || schema === undefined) return undefined as Result<S>;

  let json: unknown;
  try {
    json = await response.json();
  } catch {
    throw new ApiRequestError(response.status, "bad_response", "The server sent an answer the console cannot read.");
  }
  const parsed = schema.safeParse(json);
  if (!parsed.success) {
    throw new ApiRequestError(
      response.status,
      "bad_response",
      `The server's answer to ${method} ${path} does not have the expected shape.`,
    );
  }
  return parsed.data as Result<S>;
}

async function errorFromResponse(response: Response): Promise<ApiRequestError> {
  let json: unknown = undefined;
  try {
    json = await response.json();
  } catch {
    // Not JSON (a proxy error page, say): fall through to a generic message.
  }
  const parsed = apiErrorSchema.safeParse(json);
  if (parsed.success) {
    const { code, message, issues } = parsed.data.error;
    return new ApiRequestError(response.status, code, message, issues ?? []);
  }
  const code = response.status >= 500 ? "unavailable" : "bad_request";
  return new ApiRequestError(
    response.status,
    code,
    `The server answered ${response.status}${response.statusText ? ` ${response.statusText}` : ""}.`,
  );
}

/** A message a person can read, for any thrown value. */
export function describeError(error: unknown): string {
  if (error instanceof ApiRequestError) return error.message;
  if (error instanceof Error && error.message) return error.message;
  return "Something went wrong.";
}
