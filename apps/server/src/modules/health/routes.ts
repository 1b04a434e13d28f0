import { ApiRouter } from "../../http/api-router.ts";
import type { AppContext } from "../../context.ts";

/** Liveness with a real database round trip: 200 when MariaDB answers, 503 when it does not. */
export function healthRouter(ctx: AppContext): ApiRouter {
  return new ApiRouter("/api/health").add("get", "/", "public", async (_req, res) => {
    try {
      await Promise.race([
        ctx.db.query("SELECT 1"),
        new Promise((_, reject) => setTimeout(() => reject(new Error("timeout")), 2000)),
      ]);
      res.json({ status: "ok", database: "ok" });
    } catch {
      res.status(503).json({ status: "degraded", database: "down" });
    }
  });
}
