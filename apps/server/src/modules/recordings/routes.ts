import { pipeline } from "node:stream/promises";
import { z } from "zod";
import { hasAnyRole, numericIdParamSchema, type User } from "@jogwright/shared";
import type { AppContext } from "../../context.ts";
import { AppError } from "../../errors.ts";
import { ApiRouter, requireAccount } from "../../http/api-router.ts";
import { parseParams } from "../../http/validate.ts";
import { findRecording, listRecordings, readFrames, settleRecording } from "./service.ts";
import { streamRecordingCsv, streamRecordingJson } from "./export.ts";

const exportParamsSchema = z.object({ id: z.coerce.number().int().positive("not a valid id"), format: z.enum(["csv", "json"]) });

/** Operators see their own recordings; engineers and safety officers see all; admins none (403). */
const MAY_SEE_ALL = ["engineer", "safety_officer"] as const;

function seesAll(user: User): boolean {
  return hasAnyRole(user.roles, MAY_SEE_ALL);
}

export function recordingsRouter(ctx: AppContext): ApiRouter {
  return new ApiRouter("/api/recordings")
    .add("get", "/", ["operator", "engineer", "safety_officer"], async (_req, res) => {
      const user = requireAccount(res);
      res.json({ recordings: await listRecordings(ctx.db, seesAll(user) ? null : user.id) });
    })
    .add("get", "/:id", ["operator", "engineer", "safety_officer"], async (req, res) => {
      const user = requireAccount(res);
      const { id } = parseParams(req, numericIdParamSchema);
      await settleRecording(ctx.db, id);
      const recording = await findRecording(ctx.db, id);
      // Somebody else's recording is "not found" for an operator (no hint that it exists).
      if (!recording || (!seesAll(user) && recording.driverId !== user.id)) throw new AppError(404, "not_found", "No such recording.");
      res.json({ recording, frames: await readFrames(ctx.db, id) });
    })
    // Streamed exports (issue 12, export.ts): same access as reading the recording.
    .add("get", "/:id/export.:format", ["operator", "engineer", "safety_officer"], async (req, res) => {
      const user = requireAccount(res);
      const { id, format } = parseParams(req, exportParamsSchema);
      await settleRecording(ctx.db, id);
      const recording = await findRecording(ctx.db, id);
      if (!recording || (!seesAll(user) && recording.driverId !== user.id)) throw new AppError(404, "not_found", "No such recording.");
      const stream = format === "csv" ? await streamRecordingCsv(ctx.db, recording) : streamRecordingJson(ctx.db, recording);
      res.set("Content-Type", format === "csv" ? "text/csv; charset=utf-8" : "application/json; charset=utf-8");
      res.attachment(`recording-${recording.id}.${format}`);
      await pipeline(stream, res);
    });
}
