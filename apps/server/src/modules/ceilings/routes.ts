import { updateCeilingsSchema } from "@jogwright/shared";
import { ApiRouter, requireAccount } from "../../http/api-router.ts";
import { parseBody } from "../../http/validate.ts";
import type { AppContext } from "../../context.ts";
import * as service from "./service.ts";

export function ceilingsRouter(ctx: AppContext): ApiRouter {
  return new ApiRouter("/api/ceilings")
    .add("get", "/", "signed-in", async (_req, res) => {
      res.json(await service.getCeilings(ctx.db));
    })
    .add("put", "/", ["safety_officer"], async (req, res) => {
      const input = parseBody(req, updateCeilingsSchema);
      res.json(await service.updateCeilings(ctx, requireAccount(res), input));
    });
}
