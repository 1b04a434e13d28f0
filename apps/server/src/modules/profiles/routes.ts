import { numericIdParamSchema } from "@jogwright/shared";
import { ApiRouter, requireAccount } from "../../http/api-router.ts";
import { parseParams } from "../../http/validate.ts";
import type { AppContext } from "../../context.ts";
import * as service from "./service.ts";

/**
 * Reading profiles. Saving them (POST /api/profiles, POST /api/profiles/:id/versions) is the versions
 * module's (versions/routes.ts).
 */
export function profilesRouter(ctx: AppContext): ApiRouter {
  return new ApiRouter("/api/profiles")
    .add("get", "/", ["engineer", "safety_officer", "operator"], async (_req, res) => {
      res.json({ profiles: await service.listProfilesFor(ctx.db, requireAccount(res)) });
    })
    .add("get", "/:id", ["engineer", "safety_officer", "operator"], async (req, res) => {
      const { id } = parseParams(req, numericIdParamSchema);
      res.json(await service.getProfile(ctx.db, requireAccount(res), id));
    });
}
