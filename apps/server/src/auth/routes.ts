import { signInSchema } from "@jogwright/shared";
import type { Session } from "lucia";
import { AppError } from "../errors.ts";
import { ApiRouter, requireAccount } from "../http/api-router.ts";
import { parseBody } from "../http/validate.ts";
import type { AppContext } from "../context.ts";
import { accountChangesFor } from "../modules/users/account-changes.ts";
import { findUserWithHashByUsername } from "../modules/users/service.ts";
import { setCookie } from "./middleware.ts";
import { decoyPasswordHash, verifyPassword } from "./password.ts";

export function authRouter(ctx: AppContext): ApiRouter {
  return new ApiRouter("/api/auth")
    .add("post", "/sign-in", "public", async (req, res) => {
      const { username, password } = parseBody(req, signInSchema);
      const address = req.ip ?? "unknown";
      // The attempt is counted before the password is checked, so parallel guesses cannot outrun the limit.
      const waitS = await ctx.signInLimiter.takeAttempt(username, address);
      if (waitS > 0) {
        throw new AppError(
          429,
          "rate_limited",
          `Too many failed sign-ins for this account from your address. Try again in ${Math.ceil(waitS / 60)} min.`,
          undefined,
          { "Retry-After": String(waitS) },
        );
      }
      const found = await findUserWithHashByUsername(ctx.db, username.toLowerCase());
      const ok = await verifyPassword(found?.passwordHash ?? (await decoyPasswordHash()), password);
      if (!found || !ok) throw new AppError(401, "invalid_credentials", "Wrong user name or password.");
      await ctx.signInLimiter.refundAttempt(username, address);
      if (!found.user.isActive) {
        throw new AppError(403, "account_inactive", "This account has been deactivated; ask an admin.");
      }
      await ctx.signInLimiter.recordSuccess(username, address);
      const session = await ctx.lucia.createSession(found.user.id, {});
      setCookie(req, res, ctx.lucia.createSessionCookie(session.id));
      res.json({ user: found.user });
    })
    .add("post", "/sign-out", "signed-in", async (req, res) => {
      const session = res.locals.session as Session;
      await ctx.lucia.invalidateSession(session.id);
      // Live-jogging sockets of this cookie session end their session (ended first) and close now.
      accountChangesFor(ctx).publish({ kind: "signed-out", userId: session.userId, sessionId: session.id });
      setCookie(req, res, ctx.lucia.createBlankSessionCookie());
      res.status(204).end();
    })
    .add("get", "/me", "signed-in", async (_req, res) => {
      res.json({ user: requireAccount(res) });
    });
}
