import { pipeline } from "node:stream/promises";
import type { Response } from "express";
import { z } from "zod";
import {
  formatStreamEvent, mapRequestSchema, numericIdParamSchema, runRequestSchema, saveTrialRequestSchema, sweepRequestSchema, trialDefinitionSchema,
} from "@jogwright/shared";
import type { AppContext } from "../../context.ts";
import { AppError } from "../../errors.ts";
import { ApiRouter, requireAccount } from "../../http/api-router.ts";
import { parseBody, parseParams, parseQuery } from "../../http/validate.ts";
import {
  armTrials, createCustomTrial, getRun, listRuns, runTrials, singularityMap, sweepVersion, updateCustomTrial,
} from "./service.ts";
import { loadRunSeries, streamRunCsv, streamRunJson } from "./export.ts";

/**
 * The tuning bench: engineers make trials, runs and sweeps; safety officers read the trials and runs (the
 * evidence) and the maps. Operators and administrators have no bench.
 */
const READERS = ["engineer", "safety_officer"] as const;
const ENGINEERS = ["engineer"] as const;

const armIdParamSchema = z.object({ armId: z.coerce.number().int().positive("not a valid id") });
const runsQuerySchema = z
  .object({
    versionId: z.coerce.number().int().positive("not a valid id").optional(),
    profileId: z.coerce.number().int().positive("not a valid id").optional(),
  })
  .refine((q) => q.versionId !== undefined || q.profileId !== undefined, { message: "give versionId or profileId", path: ["versionId"] });

/** An AbortSignal that fires when the client goes away before the response is complete. */
function abortOnClose(res: Response): AbortSignal {
  const controller = new AbortController();
  res.on("close", () => {
    if (!res.writableFinished) controller.abort(new Error("the client went away"));
  });
  return controller.signal;
}

export function benchRouter(ctx: AppContext): ApiRouter {
  return new ApiRouter("/api/bench")
    .add("get", "/arms/:armId/trials", READERS, async (req, res) => {
      const { armId } = parseParams(req, armIdParamSchema);
      res.json(await armTrials(ctx.db, armId));
    })
    .add("post", "/trials", ENGINEERS, async (req, res) => {
      const actor = requireAccount(res);
      res.status(201).json({ trial: await createCustomTrial(ctx.db, actor, parseBody(req, saveTrialRequestSchema)) });
    })
    .add("put", "/trials/:id", ENGINEERS, async (req, res) => {
      const actor = requireAccount(res);
      const { id } = parseParams(req, numericIdParamSchema);
      const { definition } = parseBody(req, z.object({ definition: trialDefinitionSchema }));
      res.json({ trial: await updateCustomTrial(ctx.db, actor, id, definition) });
    })
    .add("post", "/runs", ENGINEERS, async (req, res) => {
      const actor = requireAccount(res);
      const request = parseBody(req, runRequestSchema);
      res.status(201).json({ runs: await runTrials(ctx.db, actor, request, abortOnClose(res)) });
    })
    // A run's full series, streamed (export.ts, issue 12).
    .add("get", "/runs/:id/export.:format", READERS, async (req, res) => {
      const { id, format } = parseParams(req, z.object({ id: z.coerce.number().int().positive("not a valid id"), format: z.enum(["csv", "json"]) }));
      const { runId, series } = await loadRunSeries(ctx.db, requireAccount(res), id);
      res.set("Content-Type", format === "csv" ? "text/csv; charset=utf-8" : "application/json; charset=utf-8");
      res.attachment(`trial-run-${runId}.${format}`);
      await pipeline(format === "csv" ? streamRunCsv(series) : streamRunJson(runId, series), res);
    })
    .add("get", "/runs", READERS, async (req, res) => {
      const actor = requireAccount(res);
      res.json({ runs: await listRuns(ctx.db, actor, parseQuery(req, runsQuerySchema)) });
    })
    .add("get", "/runs/:id", READERS, async (req, res) => {
      const actor = requireAccount(res);
      const { id } = parseParams(req, numericIdParamSchema);
      res.json(await getRun(ctx.db, actor, id));
    })
    .add("post", "/maps", READERS, async (req, res) => {
      res.json(await singularityMap(ctx.db, parseBody(req, mapRequestSchema)));
    })
    .add("post", "/sweeps", ENGINEERS, async (req, res) => {
      // Server-sent events over the POST's response: `progress` {done, total} (at most ~10 a second), then
      // `result` (the sweep) or `error` ({error: {code, message}}). Closing the request cancels the sweep.
      const actor = requireAccount(res);
      const request = parseBody(req, sweepRequestSchema);
      const signal = abortOnClose(res);
      res.status(200).set({ "Content-Type": "text/event-stream; charset=utf-8", "Cache-Control": "no-store", "X-Accel-Buffering": "no" });
      res.flushHeaders();
      const send = (event: string, data: unknown) => res.write(formatStreamEvent(event, data));
      let lastSent = 0;
      // The one try/catch among the routes: once the stream's headers are out, the central error handler
      // can no longer answer with a status, so a failure is sent as the stream's `error` event instead.
      try {
        const result = await sweepVersion(
          ctx.db, actor, request,
          (done, total) => {
            const now = performance.now();
            if (done === 0 || done === total || now - lastSent >= 100) {
              lastSent = now;
              send("progress", { done, total });
            }
          },
          signal,
        );
        send("result", result);
      } catch (error) {
        if (signal.aborted) return; // nobody is listening
        const e = error instanceof AppError ? error : new AppError(500, "internal", "The sweep failed.");
        if (!(error instanceof AppError)) console.error("[jogwright] sweep failed:", error);
        send("error", { error: { code: e.code, message: e.message, issues: e.issues } });
      }
      res.end();
    });
}
