import { numericIdParamSchema, versionFileSchema } from "@jogwright/shared";
import { ApiRouter, requireAccount } from "../../http/api-router.ts";
import { parseBody, parseParams } from "../../http/validate.ts";
import type { AppContext } from "../../context.ts";
import { exportVersion, importVersion } from "./service.ts";

/** Version files: export for everyone who reads versions (operators their own), import for engineers. */
export function versionFilesRouters(ctx: AppContext): ApiRouter[] {
  const exports = new ApiRouter("/api/versions").add("get", "/:id/export", ["engineer", "safety_officer", "operator"], async (req, res) => {
    const { id } = parseParams(req, numericIdParamSchema);
    const file = await exportVersion(ctx.db, requireAccount(res), id);
    res.attachment(`profile-${file.profile.id}-v${file.version.number}.json`).json(file);
  });
  const imports = new ApiRouter("/api/profiles").add("post", "/:id/import", ["engineer"], async (req, res) => {
    const { id } = parseParams(req, numericIdParamSchema);
    const file = parseBody(req, versionFileSchema);
    res.status(201).json({ version: await importVersion(ctx, requireAccount(res), id, file) });
  });
  return [exports, imports];
}
