import { numericIdParamSchema, reconfirmVersionSchema, updateCeilingsSchema } from "@jogwright/shared";
import { ApiRouter, requireAccount } from "../../http/api-router.ts";
import { parseBody, parseParams } from "../../http/validate.ts";
import type { AppContext } from "../../context.ts";
import { accountChangesFor } from "../users/account-changes.ts";
import * as service from "./service.ts";

export function ceilingsRouters(ctx: AppContext): ApiRouter[] {
  const ceilings = new ApiRouter("/api/ceilings")
    .add("get", "/", "signed-in", async (_req, res) => {
      res.json(await service.getCeilings(ctx.db));
    })
    .add("put", "/", ["safety_officer"], async (req, res) => {
      const input = parseBody(req, updateCeilingsSchema);
      const updated = await service.updateCeilings(ctx, requireAccount(res), input);
      // Versions flagged by the change stop being driveable now: the sockets driving them find out at once.
      if (updated.flaggedVersionIds.length > 0) accountChangesFor(ctx).publish({ kind: "versions", why: "ceilings-changed" });
      res.json(updated);
    })
    .add("get", "/flagged", ["engineer", "safety_officer"], async (_req, res) => {
      res.json({ versions: await service.listFlaggedVersions(ctx.db) });
    });
  // Re-confirming a flagged version under the ceilings in force (the check is this module's rule).
  const reconfirm = new ApiRouter("/api/versions").add("post", "/:id/reconfirm", ["safety_officer"], async (req, res) => {
    const { id } = parseParams(req, numericIdParamSchema);
    const input = parseBody(req, reconfirmVersionSchema);
    res.json({ version: await service.reconfirmVersion(ctx, requireAccount(res), id, input) });
  });
  return [ceilings, reconfirm];
}
