import { queryOptions, skipToken } from "@tanstack/react-query";
import {
  armTrialsSchema, mapResponseSchema, runDetailSchema, runsResponseSchema, sweepProgressSchema, sweepResultSchema, versionResponseSchema,
  type MapRequest, type ProfileParams, type RunRequest, type SweepRequest, type SweepResult,
} from "@jogwright/shared";
import { ApiRequestError, apiRequest } from "../../../lib/api-client.ts";

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

/** Saves `params` as the profile's next version (a draft) on top of `parentVersionId`. */
export async function saveDraft(profileId: number, parentVersionId: number, params: ProfileParams, note: string) {
  return (await apiRequest(`/api/profiles/${profileId}/versions`, { method: "POST", body: { parentVersionId, params, note }, schema: versionResponseSchema })).version;
}

/**
 * POST /api/bench/sweeps and read its server-sent events: `progress` to onProgress, then the result.
 * Aborting `signal` closes the request, which cancels the sweep on the server.
 */
export async function runSweep(request: SweepRequest, onProgress: (done: number, total: number) => void, signal: AbortSignal): Promise<SweepResult> {
  const response = await fetch("/api/bench/sweeps", {
    method: "POST",
    headers: { "Content-Type": "application/json", Accept: "text/event-stream" },
    credentials: "same-origin",
    body: JSON.stringify(request),
    signal,
  });
  if (!response.ok || !response.body) {
    // A refusal before the stream (400, 403 …) is an ordinary JSON error.
    const body = (await response.json().catch(() => null)) as { error?: { code?: string; message?: string; issues?: { path: string; message: string }[] } } | null;
    throw new ApiRequestError(response.status, (body?.error?.code ?? "internal"), body?.error?.message ?? "The sweep could not start.", body?.error?.issues ?? []);
  }
  const reader = response.body.getReader();
  const decoder = new TextDecoder();
  let buffer = "";
  for (;;) {
    const { value, done } = await reader.read();
    if (done) break;
    buffer += decoder.decode(value, { stream: true });
    let end: number;
    while ((end = buffer.indexOf("\n\n")) >= 0) {
      const block = buffer.slice(0, end);
      buffer = buffer.slice(end + 2);
      const event = /^event: (.*)$/m.exec(block)?.[1];
      const data = JSON.parse(/^data: (.*)$/m.exec(block)?.[1] ?? "null") as unknown;
      if (event === "progress") {
        const p = sweepProgressSchema.parse(data);
        onProgress(p.done, p.total);
      } else if (event === "result") {
        return sweepResultSchema.parse(data);
      } else if (event === "error") {
        const e = (data as { error: { code: string; message: string; issues?: { path: string; message: string }[] } }).error;
        throw new ApiRequestError(400, e.code, e.message, e.issues ?? []);
      }
    }
  }
  throw new ApiRequestError(0, "unavailable", "The sweep's stream ended without a result.");
}
