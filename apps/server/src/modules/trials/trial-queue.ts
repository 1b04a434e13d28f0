import v8 from "node:v8";
import { Queue, QueueEvents, Worker, type Job } from "bullmq";
import type { Scale } from "../../scale/redis.ts";
import type { MapJob } from "./map-job.ts";
import type { RunJob, RunJobResult } from "./run-job.ts";
import type { MapGrid } from "./singularity-map.ts";
import { mapLocally, runLocally, setRemoteTrials, trialPoolSize, type RemoteTrials } from "./trial-pool.ts";

/**
 * Scaled out (REDIS_URL), the tuning bench's runs and maps go through one BullMQ queue in the shared
 * Redis: the instance that serves the request adds a job and waits for its result; the worker of any
 * instance (TRIAL_QUEUE_CONCURRENCY jobs at a time, default its pool size; 0 for an instance that only
 * submits) takes it and runs it in its own Piscina pool (trial-pool.ts). A job's input and result cross
 * Redis as v8 serialisations (typed arrays, NaN and ±Infinity survive; JSON would turn them into null),
 * so a run gives the same series hash wherever it ran. Cancelling (a sweep's Cancel) removes the jobs not
 * yet taken; a job already running finishes and its result is dropped.
 */
export const TRIAL_QUEUE = "jogwright-trials";

type Payload = { kind: "run"; job: RunJob } | { kind: "map"; job: MapJob };
interface WireResult {
  /** The instance whose worker ran it. */
  by: string;
  result: string;
}

const encode = (value: unknown): string => v8.serialize(value).toString("base64");
const decode = <T>(text: string): T => v8.deserialize(Buffer.from(text, "base64")) as T;

function abortError(): Error {
  return Object.assign(new Error("The run was cancelled."), { name: "AbortError" });
}

export class TrialQueue implements RemoteTrials {
  private readonly queue: Queue;
  private readonly events: QueueEvents;
  private readonly worker: Worker | null;
  private readonly ready: Promise<unknown>;
  /** Jobs this instance's worker ran (the scale-out test reads it through the log and the status route). */
  processed = 0;

  constructor(private readonly scale: Scale, concurrency: number) {
    this.queue = new Queue(TRIAL_QUEUE, { connection: scale.connection("trial-queue") });
    this.events = new QueueEvents(TRIAL_QUEUE, { connection: scale.connection("trial-events") });
    this.ready = this.events.waitUntilReady();
    this.worker =
      concurrency > 0
        ? new Worker(TRIAL_QUEUE, (job: Job<{ payload: string }>) => this.process(job), { connection: scale.connection("trial-worker"), concurrency })
        : null;
    this.worker?.on("error", (error) => console.error(`[jogwright] trial queue worker: ${error.message}`));
  }

  private async process(job: Job<{ payload: string }>): Promise<WireResult> {
    const payload = decode<Payload>(job.data.payload);
    const result = payload.kind === "run" ? await runLocally(payload.job) : await mapLocally(payload.job);
    this.processed++;
    return { by: this.scale.instanceId, result: encode(result) };
  }

  private async submit<T>(payload: Payload, signal?: AbortSignal): Promise<T> {
    if (signal?.aborted) throw abortError();
    await this.ready;
    const job = await this.queue.add(payload.kind, { payload: encode(payload) }, { removeOnComplete: { age: 300 }, removeOnFail: { age: 300 } });
    return new Promise<T>((resolve, reject) => {
      const onAbort = () => {
        job.remove().catch(() => undefined); // taken already: it finishes, its result is not waited for
        reject(abortError());
      };
      signal?.addEventListener("abort", onAbort, { once: true });
      job
        .waitUntilFinished(this.events)
        .then((wire: WireResult) => resolve(decode<T>(wire.result)), reject)
        .finally(() => signal?.removeEventListener("abort", onAbort));
    });
  }

  run(job: RunJob, signal?: AbortSignal): Promise<RunJobResult> {
    return this.submit<RunJobResult>({ kind: "run", job }, signal);
  }

  map(job: MapJob, signal?: AbortSignal): Promise<MapGrid> {
    return this.submit<MapGrid>({ kind: "map", job }, signal);
  }

  async close(): Promise<void> {
    await this.worker?.close();
    await Promise.allSettled([this.queue.close(), this.events.close()]);
  }
}

/** Scaled out: every run and map of this process goes through the shared queue (see TrialQueue). */
export function useTrialQueue(scale: Scale, concurrency: number | null): TrialQueue {
  const q = new TrialQueue(scale, concurrency ?? trialPoolSize());
  setRemoteTrials(q);
  return q;
}
