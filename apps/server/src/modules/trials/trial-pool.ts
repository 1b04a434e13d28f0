import { availableParallelism } from "node:os";
import { Piscina } from "piscina";
import type { MapJob } from "./map-job.ts";
import type { RunJob, RunJobResult } from "./run-job.ts";
import type { MapGrid } from "./singularity-map.ts";

/**
 * Offline runs of the tuning bench go to a pool of worker threads (Piscina), sized to the cores, never the
 * request thread or the jog simulation thread. A run can be cancelled through its AbortSignal (a queued run
 * is dropped; a running one ends with its worker). One pool per process, made on first use.
 */
let pool: Piscina | null = null;

let threads: number | null = null;

/** The pool's size from the configuration (TRIAL_POOL_THREADS, validated in config.ts); null: one per core. Before first use. */
export function configureTrialPool(configured: number | null): void {
  threads = configured;
}

export function trialPoolSize(): number {
  return threads ?? Math.max(1, availableParallelism());
}

function getPool(): Piscina {
  if (!pool) {
    pool = new Piscina({
      filename: new URL("./run-worker.mjs", import.meta.url).href,
      maxThreads: trialPoolSize(),
      minThreads: 0,
      // A thread loads the kinematics, mathjs and the trial code through tsx (seconds): keep it for five
      // minutes after its last run, so an engineer's next run, a review's evidence or a sweep starts warm.
      idleTimeout: 5 * 60_000,
    });
  }
  return pool;
}

/** Where runs go instead of this process's pool when the site is scaled out (trial-queue.ts). */
export interface RemoteTrials {
  run(job: RunJob, signal?: AbortSignal): Promise<RunJobResult>;
  map(job: MapJob, signal?: AbortSignal): Promise<MapGrid>;
  close(): Promise<void>;
}
let remote: RemoteTrials | null = null;

/** Scaled out: every run and map goes through `r` (the shared queue); null: this process's pool again. */
export function setRemoteTrials(r: RemoteTrials | null): void {
  remote = r;
}

/** A run in this process's pool (the queue's worker calls this for the jobs it takes). */
export function runLocally(job: RunJob, signal?: AbortSignal): Promise<RunJobResult> {
  return getPool().run(job, signal ? { signal } : {}) as Promise<RunJobResult>;
}

/** A singularity map (map-job.ts) in this process's pool. */
export function mapLocally(job: MapJob, signal?: AbortSignal): Promise<MapGrid> {
  return getPool().run(job, signal ? { name: "map", signal } : { name: "map" }) as Promise<MapGrid>;
}

/** A run: in the shared queue when scaled out (any instance's workers take it), else in this process's pool. */
export function runInPool(job: RunJob, signal?: AbortSignal): Promise<RunJobResult> {
  return remote ? remote.run(job, signal) : runLocally(job, signal);
}

/** A singularity map, like runInPool. */
export function mapInPool(job: MapJob, signal?: AbortSignal): Promise<MapGrid> {
  return remote ? remote.map(job, signal) : mapLocally(job, signal);
}

/** Runs waiting for a thread (a cancelled sweep drops its queued runs: this falls back to 0). */
export function trialPoolQueueSize(): number {
  return pool?.queueSize ?? 0;
}

export async function closeTrialPool(): Promise<void> {
  const r = remote;
  remote = null;
  await r?.close();
  const p = pool;
  pool = null;
  if (p) await p.destroy();
}
