import type { Request, RequestHandler, Response } from "express";
import type { Cookie } from "lucia";
import { AppError } from "../errors.ts";
import type { AppContext } from "../context.ts";
import { findUserById } from "../modules/users/model.ts";
import { SESSION_COOKIE } from "./lucia.ts";

const STATE_CHANGING = new Set(["POST", "PUT", "PATCH", "DELETE"]);

/** The request's own origin, as the browser sees it (honours X-Forwarded-Proto only with TRUST_PROXY=1). */
export function ownOrigin(req: Request): string {
  return `${req.protocol}://${req.get("host") ?? ""}`;
}

export function isAllowedOrigin(ctx: AppContext, req: Request, origin: string | undefined): boolean {
  if (!origin) return false;
  return origin === ownOrigin(req) || ctx.config.allowedOrigins.includes(origin);
}

/**
 * Requests that change state must come from our own pages: the Origin header (sent by every browser on
 * such requests) must be this server's origin. Without it, or from elsewhere: 403.
 */
export function originCheck(ctx: AppContext): RequestHandler {
  return (req, _res, next) => {
    if (!STATE_CHANGING.has(req.method)) return next();
    const origin = req.get("origin");
    if (!isAllowedOrigin(ctx, req, origin)) {
      throw new AppError(
        403,
        "bad_origin",
        origin ? `Requests from ${origin} may not change anything here.` : "State-changing requests must carry an Origin header.",
      );
    }
    next();
  };
}

export function readSessionId(cookieHeader: string | undefined): string | null {
  if (!cookieHeader) return null;
  for (const part of cookieHeader.split(";")) {
    const [name, ...rest] = part.trim().split("=");
    if (name === SESSION_COOKIE) return decodeURIComponent(rest.join("="));
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

/** Resolve the session cookie into the account (with roles) on res.locals; inactive accounts count as signed out. */
export async function resolveAccount(ctx: AppContext, cookieHeader: string | undefined) {
  const sessionId = readSessionId(cookieHeader);
  if (!sessionId) return { session: null, account: null } as const;
  const { session } = await ctx.lucia.validateSession(sessionId);
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
    const resolved = await resolveAccount(ctx, req.headers.cookie);
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
