import type { AppContext } from "../../context.ts";
import { ApiRouter } from "../../http/api-router.ts";
import { jogHubFor } from "./hub.ts";

/** Live sessions, for engineers and safety officers to pick one to watch (read-only, over /ws/jog). */
export function jogRouter(ctx: AppContext): ApiRouter {
  return new ApiRouter("/api/jog").add("get", "/live", ["engineer", "safety_officer"], async (_req, res) => {
    res.json({ sessions: await jogHubFor(ctx).listLive() });
  });
}
