import { pipeline } from "node:stream/promises";
import { auditQuerySchema } from "@jogwright/shared";
import { ApiRouter } from "../../http/api-router.ts";
import { parseQuery } from "../../http/validate.ts";
import type { AppContext } from "../../context.ts";
import * as service from "./service.ts";

export function auditRouter(ctx: AppContext): ApiRouter {
  return new ApiRouter("/api/audit")
    .add("get", "/", ["safety_officer", "admin"], async (req, res) => {
      const { page, pageSize, ...filter } = parseQuery(req, auditQuerySchema);
      res.json(await service.listAudit(ctx.db, filter, page, pageSize));
    })
    .add("get", "/export.csv", ["safety_officer", "admin"], async (req, res) => {
      const { page: _page, pageSize: _pageSize, ...filter } = parseQuery(req, auditQuerySchema);
      const stamp = new Date().toISOString().slice(0, 19).replace(/[-:]/g, "").replace("T", "-");
      res.set("Content-Type", "text/csv; charset=utf-8");
      res.set("Content-Disposition", `attachment; filename="jogwright-audit-${stamp}.csv"`);
      // Streamed in batches, no row cap (issue 12); an error after the first bytes can only cut the answer short.
      await pipeline(service.streamAuditCsv(ctx.db, filter), res);
    });
}
