import { approveVersionSchema, numericIdParamSchema, rejectVersionSchema, submitVersionSchema } from "@jogwright/shared";
import { ApiRouter, requireAccount } from "../../http/api-router.ts";
import { parseBody, parseParams } from "../../http/validate.ts";
import type { AppContext } from "../../context.ts";
import * as service from "./service.ts";

/** A version as the review screen reads it, submitting for review, the decisions, the review queue. */
export function reviewsRouters(ctx: AppContext): ApiRouter[] {
  const versions = new ApiRouter("/api/versions")
    .add("get", "/:id", ["engineer", "safety_officer", "operator"], async (req, res) => {
      const { id } = parseParams(req, numericIdParamSchema);
      res.json(await service.getVersionDetail(ctx.db, requireAccount(res), id));
    })
    .add("post", "/:id/submit", ["engineer"], async (req, res) => {
      const { id } = parseParams(req, numericIdParamSchema);
      // The body is optional: no body submits with the evidence the site's rule asks for.
      const input = req.body === undefined ? submitVersionSchema.parse({}) : parseBody(req, submitVersionSchema);
      res.json({ version: await service.submitVersion(ctx, requireAccount(res), id, input) });
    })
    .add("post", "/:id/approve", ["safety_officer"], async (req, res) => {
      const { id } = parseParams(req, numericIdParamSchema);
      const input = parseBody(req, approveVersionSchema);
      res.json({ version: await service.approveVersion(ctx, requireAccount(res), id, input) });
    })
    .add("post", "/:id/reject", ["safety_officer"], async (req, res) => {
      const { id } = parseParams(req, numericIdParamSchema);
      const input = parseBody(req, rejectVersionSchema);
      res.json({ version: await service.rejectVersion(ctx, requireAccount(res), id, input) });
    });
  const queue = new ApiRouter("/api/reviews").add("get", "/", ["safety_officer"], async (_req, res) => {
    res.json({ versions: await service.listReviewQueue(ctx.db) });
  });
  return [versions, queue];
}
