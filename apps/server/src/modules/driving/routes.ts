import type { DriveVersionsResponse } from "@jogwright/shared";
import { ApiRouter, requireAccount } from "../../http/api-router.ts";
import type { AppContext } from "../../context.ts";
import * as service from "./service.ts";

/** What the signed-in person may drive, by the one driving rule (empty for those who drive nothing). */
export function drivingRouter(ctx: AppContext): ApiRouter {
  return new ApiRouter("/api/drive").add("get", "/versions", "signed-in", async (_req, res) => {
    const body: DriveVersionsResponse = { versions: await service.driveableVersionsFor(ctx.db, requireAccount(res)) };
    res.json(body);
  });
}
