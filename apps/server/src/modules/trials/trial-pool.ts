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
      idleTimeout: 30_000,
    });
  }
  return pool;
}

export function runInPool(job: RunJob, signal?: AbortSignal): Promise<RunJobResult> {
  return getPool().run(job, signal ? { signal } : {}) as Promise<RunJobResult>;
}

/** A singularity map (map-job.ts), in the same pool. */
export function mapInPool(job: MapJob, signal?: AbortSignal): Promise<MapGrid> {
  return getPool().run(job, signal ? { name: "map", signal } : { name: "map" }) as Promise<MapGrid>;
}

/** Runs waiting for a thread (a cancelled sweep drops its queued runs: this falls back to 0). */
export function trialPoolQueueSize(): number {
  return pool?.queueSize ?? 0;
}

export async function closeTrialPool(): Promise<void> {
  const p = pool;
  pool = null;
  if (p) await p.destroy();
}
