import { numericIdParamSchema } from "@jogwright/shared";
import { AppError } from "../../errors.ts";
import { ApiRouter } from "../../http/api-router.ts";
import { parseParams } from "../../http/validate.ts";
import type { AppContext } from "../../context.ts";
import { findArm, listArms } from "./service.ts";

export function armsRouter(ctx: AppContext): ApiRouter {
  return new ApiRouter("/api/arms")
    .add("get", "/", "signed-in", async (_req, res) => {
      res.json({ arms: await listArms(ctx.db) });
    })
    .add("get", "/:id", "signed-in", async (req, res) => {
      const { id } = parseParams(req, numericIdParamSchema);
      const arm = await findArm(ctx.db, id);
      if (!arm) throw new AppError(404, "not_found", "No such arm.");
      res.json({ arm });
    });
}
