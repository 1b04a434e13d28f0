import {
  approveVersionSchema,
  createProfileSchema,
  type DriveVersionsResponse,
  numericIdParamSchema,
  rejectVersionSchema,
  retireVersionSchema,
  saveVersionSchema,
} from "@jogwright/shared";
import { ApiRouter, requireAccount } from "../../http/api-router.ts";
import { parseBody, parseParams } from "../../http/validate.ts";
import type { AppContext } from "../../context.ts";
import * as service from "./service.ts";

/**
 * Profiles, their versions and the review queue; operators to pick from when creating a profile; the
 * versions the signed-in person may drive.
 */
export function profileRouters(ctx: AppContext): ApiRouter[] {
  const operators = new ApiRouter("/api/operators").add("get", "/", ["engineer", "safety_officer"], async (_req, res) => {
    res.json({ operators: await service.listOperators(ctx.db) });
  });

  const profiles = new ApiRouter("/api/profiles")
    .add("get", "/", ["engineer", "safety_officer", "operator"], async (_req, res) => {
      res.json({ profiles: await service.listProfilesFor(ctx.db, requireAccount(res)) });
    })
    .add("post", "/", ["engineer"], async (req, res) => {
      const input = parseBody(req, createProfileSchema);
      res.status(201).json({ profile: await service.createProfile(ctx, requireAccount(res), input) });
    })
    .add("get", "/:id", ["engineer", "safety_officer", "operator"], async (req, res) => {
      const { id } = parseParams(req, numericIdParamSchema);
      res.json(await service.getProfile(ctx.db, requireAccount(res), id));
    })
    .add("post", "/:id/versions", ["engineer"], async (req, res) => {
      const { id } = parseParams(req, numericIdParamSchema);
      const input = parseBody(req, saveVersionSchema);
      res.status(201).json({ version: await service.saveVersion(ctx, requireAccount(res), id, input) });
    });

  const versions = new ApiRouter("/api/versions")
    .add("get", "/:id", ["engineer", "safety_officer", "operator"], async (req, res) => {
      const { id } = parseParams(req, numericIdParamSchema);
      res.json(await service.getVersionDetail(ctx.db, requireAccount(res), id));
    })
    .add("post", "/:id/submit", ["engineer"], async (req, res) => {
      const { id } = parseParams(req, numericIdParamSchema);
      res.json({ version: await service.submitVersion(ctx, requireAccount(res), id) });
    })
    .add("post", "/:id/approve", ["safety_officer"], async (req, res) => {
      const { id } = parseParams(req, numericIdParamSchema);
      const input = parseBody(req, approveVersionSchema);
      res.json({ version: await service.approveVersion(ctx, requireAccount(res), id, input) });
    })
    .add("post", "/:id/reject", ["safety_officer"], async (req, res) => {
      const { id } = parseParams(req, numericIdParamSchema);
      const input = parseBody(req, rejectVersionSchema);
      res.json({ version: await service.rejectVersion(ctx, requireAccount(res), id, input) });
    })
    .add("post", "/:id/retire", ["safety_officer"], async (req, res) => {
      const { id } = parseParams(req, numericIdParamSchema);
      const input = parseBody(req, retireVersionSchema);
      res.json({ version: await service.retireVersion(ctx, requireAccount(res), id, input) });
    });

  const reviews = new ApiRouter("/api/reviews").add("get", "/", ["safety_officer"], async (_req, res) => {
    res.json({ versions: await service.listReviewQueue(ctx.db) });
  });

  // What the signed-in person may drive, by the one driving rule (empty for those who drive nothing).
  const drive = new ApiRouter("/api/drive").add("get", "/versions", "signed-in", async (_req, res) => {
    const body: DriveVersionsResponse = { versions: await service.driveableVersionsFor(ctx.db, requireAccount(res)) };
    res.json(body);
  });

  return [operators, profiles, versions, reviews, drive];
}
