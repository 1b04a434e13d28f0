import { approveVersionSchema, numericIdParamSchema, rejectVersionSchema, submitVersionSchema } from "@jogwright/shared";
import { ApiRouter, requireAccount } from "../../http/api-router.ts";
import { parseParams } from "../../http/validate.ts";
import { versionMove } from "../../http/version-move.ts";
import type { AppContext } from "../../context.ts";
import * as service from "./service.ts";

/** A version as the review screen reads it, submitting for review, the decisions, the review queue. */
export function reviewsRouters(ctx: AppContext): ApiRouter[] {
  const versions = new ApiRouter("/api/versions")
    .add("get", "/:id", ["engineer", "safety_officer", "operator"], async (req, res) => {
      const { id } = parseParams(req, numericIdParamSchema);
      res.json(await service.getVersionDetail(ctx.db, requireAccount(res), id));
    })
    // The body is optional: no body submits with the evidence the site's rule asks for.
    .add("post", "/:id/submit", ["engineer"], versionMove(ctx, submitVersionSchema, service.submitVersion, { isBodyOptional: true }))
    .add("post", "/:id/approve", ["safety_officer"], versionMove(ctx, approveVersionSchema, service.approveVersion, { drivingChange: "approved" }))
    .add("post", "/:id/reject", ["safety_officer"], versionMove(ctx, rejectVersionSchema, service.rejectVersion));
  const queue = new ApiRouter("/api/reviews").add("get", "/", ["safety_officer"], async (_req, res) => {
    res.json({ versions: await service.listReviewQueue(ctx.db) });
  });
  return [versions, queue];
}
