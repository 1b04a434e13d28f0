import { z } from "zod";
import { gamepadMappingSchema } from "@jogwright/shared";
import type { AppContext } from "../../context.ts";
import { ApiRouter, requireAccount } from "../../http/api-router.ts";
import { parseBody } from "../../http/validate.ts";
import { findGamepadMapping, saveGamepadMapping } from "./service.ts";

const putMappingSchema = z.object({ mapping: gamepadMappingSchema });

/** The signed-in user's own gamepad mapping. */
export function gamepadRouter(ctx: AppContext): ApiRouter {
  return new ApiRouter("/api/gamepad-mapping")
    .add("get", "/", "signed-in", async (_req, res) => {
      res.json({ mapping: await findGamepadMapping(ctx.db, requireAccount(res).id) });
    })
    .add("put", "/", "signed-in", async (req, res) => {
      const user = requireAccount(res);
      const { mapping } = parseBody(req, putMappingSchema);
      await saveGamepadMapping(ctx.db, user.id, mapping);
      res.json({ mapping });
    });
}
