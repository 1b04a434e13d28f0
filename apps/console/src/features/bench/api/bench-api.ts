import { queryOptions, skipToken } from "@tanstack/react-query";
import { z } from "zod";
import {
  armTrialsSchema, customTrialSchema, mapResponseSchema, runDetailSchema, runsResponseSchema, sweepProgressSchema, sweepResultSchema, takeStreamEvents, versionResponseSchema,
  type ApiError, type MapRequest, type ProfileParams, type RunRequest, type SweepRequest, type SweepResult, type TrialDefinition,
} from "@jogwright/shared";
import { ApiRequestError, apiEventStream, apiRequest } from "../../../lib/api-client.ts";

/** The tuning bench's requests (GET/POST /api/bench/…): trials of an arm, runs, sweeps, maps. */
export const benchKeys = {
  all: ["bench"] as const,
  trials: (armId: number | null) => [...benchKeys.all, "trials", armId] as const,
  run: (runId: number) => [...benchKeys.all, "run", runId] as const,
};

export const armTrialsQueryOptions = (armId: number | null) =>
  queryOptions({
    queryKey: benchKeys.trials(armId),
    queryFn: armId === null ? skipToken : ({ signal }) => apiRequest(`/api/bench/arms/${armId}/trials`, { schema: armTrialsSchema, signal }),
    staleTime: 60_000,
  });

/** A run with its display series; runs never change, so it stays cached. */
export const runDetailQueryOptions = (runId: number) =>
  queryOptions({
    queryKey: benchKeys.run(runId),
    queryFn: ({ signal }) => apiRequest(`/api/bench/runs/${runId}`, { schema: runDetailSchema, signal }),
    staleTime: Infinity,
  });

export async function runTrials(request: RunRequest, signal?: AbortSignal) {
  return (await apiRequest("/api/bench/runs", { method: "POST", body: request, schema: runsResponseSchema, signal })).runs;
}

export async function fetchMap(request: MapRequest, signal?: AbortSignal) {
  return apiRequest("/api/bench/maps", { method: "POST", body: request, schema: mapResponseSchema, signal });
}

/** Saves a custom trial of the arm (checked in full by the server first). */
export async function saveCustomTrial(armId: number, definition: TrialDefinition) {
  return (await apiRequest("/api/bench/trials", { method: "POST", body: { armId, definition }, schema: z.object({ trial: customTrialSchema }) })).trial;
}

/** Saves `params` as the profile's next version (a draft) on top of `parentVersionId`. */
export async function saveDraft(profileId: number, parentVersionId: number, params: ProfileParams, note: string) {
  return (await apiRequest(`/api/profiles/${profileId}/versions`, { method: "POST", body: { parentVersionId, params, note }, schema: versionResponseSchema })).version;
}

/**
 * POST /api/bench/sweeps and read its server-sent events: `progress` to onProgress, then the result.
 * Aborting `signal` closes the request, which cancels the sweep on the server.
 */
export async function runSweep(request: SweepRequest, onProgress: (done: number, total: number) => void, signal: AbortSignal): Promise<SweepResult> {
  const reader = (await apiEventStream("/api/bench/sweeps", request, signal)).getReader();
  const decoder = new TextDecoder();
  let buffer = "";
  for (;;) {
    const { value, done } = await reader.read();
    if (done) break;
    const taken = takeStreamEvents(buffer + decoder.decode(value, { stream: true }));
    buffer = taken.rest;
    for (const { event, data } of taken.events) {
      if (event === "progress") {
        const p = sweepProgressSchema.parse(data);
        onProgress(p.done, p.total);
      } else if (event === "result") {
        return sweepResultSchema.parse(data);
      } else if (event === "error") {
        const e = (data as ApiError).error;
        throw new ApiRequestError(400, e.code, e.message, e.issues ?? []);
      }
    }
  }
  throw new ApiRequestError(0, "unavailable", "The sweep's stream ended without a result.");
}
