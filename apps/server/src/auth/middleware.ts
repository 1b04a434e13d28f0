import type { Request, RequestHandler, Response } from "express";
import type { Cookie } from "lucia";
import { AppError } from "../errors.ts";
import type { AppContext } from "../context.ts";
import { findUserById } from "../modules/users/service.ts";
import { SESSION_COOKIE } from "./lucia.ts";
import { BACKGROUND_REQUEST_HEADER, readSessionWithoutExtending } from "./session-check.ts";

const STATE_CHANGING = new Set(["POST", "PUT", "PATCH", "DELETE"]);

/**
 * Whether an Origin header names one of our own pages: the configured public origin (PUBLIC_ORIGIN) or one
 * of ALLOWED_ORIGINS. Never derived from the request's Host header, which the sender chooses (a page
 * that rebinds its DNS name to this server, or a proxy, could make Host agree with any Origin).
 * Used by the HTTP check below and by the jog WebSocket upgrade.
 */
export function isAllowedOrigin(ctx: AppContext, origin: string | undefined): boolean {
  if (!origin) return false;
  return origin === ctx.config.publicOrigin || ctx.config.allowedOrigins.includes(origin);
}

/**
 * Requests that change state must come from our own pages: the Origin header (sent by every browser on
 * such requests) must be the public origin. Without it, or from elsewhere: 403.
 */
export function originCheck(ctx: AppContext): RequestHandler {
  return (req, _res, next) => {
    if (!STATE_CHANGING.has(req.method)) return next();
    const origin = req.get("origin");
    if (!isAllowedOrigin(ctx, origin)) {
      throw new AppError(
        403,
        "bad_origin",
        // Someone who opened the console at another address (say localhost) learns where it lives.
        origin
          ? `Requests from ${origin} may not change anything here; open Jogwright at ${ctx.config.publicOrigin} (or set PUBLIC_ORIGIN).`
          : "State-changing requests must carry an Origin header.",
      );
    }
    next();
  };
}

/** The session id from a Cookie header, or null; a value that is not valid percent-encoding is no session. */
export function readSessionId(cookieHeader: string | undefined): string | null {
  if (!cookieHeader) return null;
  for (const part of cookieHeader.split(";")) {
    const [name, ...rest] = part.trim().split("=");
    if (name !== SESSION_COOKIE) continue;
    try {
      return decodeURIComponent(rest.join("="));
    } catch {
      return null; // URIError: a malformed escape such as "%E0%A4%A" cannot be one of our ids
    }
  }
  return null;
}

export function setCookie(req: Request, res: Response, cookie: Cookie): void {
  const a = cookie.attributes;
  res.cookie(cookie.name, cookie.value, {
    httpOnly: true,
    sameSite: "lax",
    secure: req.secure,
    path: a.path ?? "/",
    ...(a.maxAge !== undefined ? { maxAge: a.maxAge * 1000 } : {}),
    ...(a.expires ? { expires: a.expires } : {}),
  });
}

/**
 * Resolve the session cookie into the account (with roles) on res.locals; inactive accounts count as signed
 * out. `isBackground`: a request the page makes on a timer, which must not extend the session
 * (session-check.ts).
 */
export async function resolveAccount(ctx: AppContext, cookieHeader: string | undefined, isBackground = false) {
  const sessionId = readSessionId(cookieHeader);
  if (!sessionId) return { session: null, account: null } as const;
  const { session } = isBackground ? await readSessionWithoutExtending(ctx, sessionId) : await ctx.lucia.validateSession(sessionId);
  if (!session) return { session: null, account: null, stale: true } as const;
  const account = await findUserById(ctx.db, session.userId);
  if (!account || !account.isActive) {
    await ctx.lucia.invalidateSession(session.id);
    return { session: null, account: null, stale: true } as const;
  }
  return { session, account } as const;
}

export function sessionLoader(ctx: AppContext): RequestHandler {
  return async (req, res, next) => {
    const resolved = await resolveAccount(ctx, req.headers.cookie, req.get(BACKGROUND_REQUEST_HEADER) === "1");
    if (resolved.session) {
      if (resolved.session.fresh) setCookie(req, res, ctx.lucia.createSessionCookie(resolved.session.id));
      res.locals.session = resolved.session;
      res.locals.account = resolved.account;
    } else if ("stale" in resolved && resolved.stale) {
      setCookie(req, res, ctx.lucia.createBlankSessionCookie());
    }
    next();
  };
}
