import { ApiRouter } from "../../http/api-router.ts";
import type { AppContext } from "../../context.ts";

/**
 * Liveness with a real database round trip: 200 when MariaDB answers, 503 when it does not. The round
 * trip is Sequelize's own ping, `authenticate()` (a `SELECT 1+1` on a pooled connection): no table, so
 * no model.
 */
export function healthRouter(ctx: AppContext): ApiRouter {
  return new ApiRouter("/api/health").add("get", "/", "public", async (_req, res) => {
    try {
      await Promise.race([
        ctx.db.authenticate(),
        new Promise((_, reject) => setTimeout(() => reject(new Error("timeout")), 2000)),
      ]);
      res.json({ status: "ok", database: "ok" });
    } catch {
      res.status(503).json({ status: "degraded", database: "down" });
    }
  });
}
