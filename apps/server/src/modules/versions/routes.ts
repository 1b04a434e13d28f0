import { createProfileSchema, numericIdParamSchema, retireVersionSchema, saveVersionSchema, withdrawVersionSchema } from "@jogwright/shared";
import { ApiRouter, requireAccount } from "../../http/api-router.ts";
import { parseBody, parseParams } from "../../http/validate.ts";
import { versionMove } from "../../http/version-move.ts";
import type { AppContext } from "../../context.ts";
import * as service from "./service.ts";


/**
 * Saving: a new profile with its version 1, a new version of a profile; retiring a version; the author
 * withdrawing a submission. Reading a
 * version for review, submitting and deciding are the reviews module's (reviews/routes.ts).
 */
export function versionsRouters(ctx: AppContext): ApiRouter[] {
  const saves = new ApiRouter("/api/profiles")
    .add("post", "/", ["engineer"], async (req, res) => {
      const input = parseBody(req, createProfileSchema);
      res.status(201).json({ profile: await service.createProfile(ctx, requireAccount(res), input) });
    })
    .add("post", "/:id/versions", ["engineer"], async (req, res) => {
      const { id } = parseParams(req, numericIdParamSchema);
      const input = parseBody(req, saveVersionSchema);
      res.status(201).json({ version: await service.saveVersion(ctx, requireAccount(res), id, input) });
    });
  const retire = new ApiRouter("/api/versions")
    .add("post", "/:id/retire", ["safety_officer"], versionMove(ctx, retireVersionSchema, service.retireVersion, { drivingChange: "retired" }))
    // The author takes a submission back (the service refuses anyone else: 403).
    .add("post", "/:id/withdraw", ["engineer"], versionMove(ctx, withdrawVersionSchema, service.withdrawVersion, { isBodyOptional: true }));
  return [saves, retire];
}
