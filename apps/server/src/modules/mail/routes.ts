import { numericIdParamSchema } from "@jogwright/shared";
import { AppError } from "../../errors.ts";
import { ApiRouter } from "../../http/api-router.ts";
import { parseParams } from "../../http/validate.ts";
import type { AppContext } from "../../context.ts";
import { findMail, listMail } from "./service.ts";

/** The outbox page: every message the server sent or tried to send, newest first. */
export function mailRouter(ctx: AppContext): ApiRouter {
  return new ApiRouter("/api/mail")
    .add("get", "/", ["admin"], async (_req, res) => {
      res.json({ messages: await listMail(ctx.db, 500) });
    })
    .add("post", "/:id/retry", ["admin"], async (req, res) => {
      const { id } = parseParams(req, numericIdParamSchema);
      const existing = await findMail(ctx.db, id);
      if (!existing) throw new AppError(404, "not_found", "No such message in the outbox.");
      if (existing.status === "sent") throw new AppError(409, "conflict", "This message was already sent.");
      await ctx.mailer.deliver([id]);
      res.json({ message: await findMail(ctx.db, id) });
    });
}
