import type { SimulationSetup, SimulationSummary } from "./simulation.ts";

/**
 * The messages between the main thread (sim-thread.ts: sockets, validation, recording) and the simulation
 * thread (sim-worker.ts: every JogSimulation and the tick scheduler). A session is named by a small integer
 * key. Main → worker messages go through one MessagePort as arrays (batches, one per event-loop turn) and
 * are applied in the order sent; a control message flushes the batch at once, inputs go at the end of the
 * event-loop turn; either rings the doorbell (Atomics.notify) so the worker applies it on receipt instead
 * of at its next tick wake. Control messages carry cmdSeq (hub-wide, increasing); every frame carries the cmdSeq of the last one
 * applied to its session, so the main thread can hold back frames built before an e-stop was applied.
 */

/** Shared Int32Array slots (workerData.signals). */
export const SIGNAL_DOORBELL = 0;
/** Incremented by the main thread every HEARTBEAT_PERIOD_MS while its event loop turns. */
export const SIGNAL_HEARTBEAT = 1;
export const SIGNAL_SLOTS = 2;
export const HEARTBEAT_PERIOD_MS = 5;

/**
 * Inputs travel as Float64Array runs inside a batch (a memcpy to clone, decoded without allocation), each
 * input INPUT_HEADER numbers then its axes: key, seq, clientTimeMs, enabling (0/1), mode (0 Cartesian,
 * 1 joint), frame (0 world, 1 tool), overridePercent, axis count, axes…
 */
export const INPUT_HEADER = 8;

/** One message main → worker: a batch, in the order sent. */
export type ToWorkerBatch = (ToWorker | Float64Array)[];

/**
 * "require-release": the enabling control must be seen released before motion (the driver's input device
 * reconnected); a moving arm makes a controlled stop. The simulation's create message carries
 * SimulationSetup.estopLatched for a session that starts with its station's latch set.
 */
export type SessionCommand = "estop" | "reset-estop" | "acknowledge" | "ready-pose" | "dropped" | "require-release";

export type ToWorker =
  | { t: "create"; key: number; sessionId: string; setup: SimulationSetup; framePeriodMs: number }
  | { t: "run"; key: number }
  | { t: "discard"; key: number }
  | { t: "command"; key: number; command: SessionCommand; cmdSeq: number }
  /**
   * Ends the session. With afterControlledStop, a moving arm first makes a controlled stop (the gate's
   * requireRelease ramp; no inputs reach it any more) and the session ends at the first tick at rest, or
   * after END_STOP_MAX_S at the latest; frames keep coming meanwhile.
   */
  | { t: "end"; key: number; cmdSeq: number; afterControlledStop?: boolean }
  | { t: "stats"; id: number; reset: boolean }
  | { t: "crash-for-test" }
  | { t: "close" };

/** One state frame: the full text to send, and where its recorded body (without braces) lies in it. */
export interface FrameText {
  text: string;
  bodyStart: number;
  bodyEnd: number;
}

export interface SimThreadStats {
  ticks: number;
  latenessP50Ms: number;
  latenessP99Ms: number;
  latenessP999Ms: number;
  latenessMaxMs: number;
  overrunTicks: number;
  stalledMs: number;
  wakes: number;
  sessions: number;
  /** The simulation thread's nice value when raising its priority succeeded, else null. */
  nice: number | null;
  /** Its SCHED_RR priority while it runs under real-time scheduling, else null (not asked, refused or given up). */
  realtimePriority: number | null;
  /** Why it runs without real-time scheduling (null while it has it). */
  realtimeNote: string | null;
}

/** What the simulation thread is started with (besides its ports). */
export interface SimThreadOptions {
  /** SCHED_RR priority to ask for (1–99); 0: none (realtime.ts). */
  realtimePriority: number;
  /** The thread's nice value (−20 to 19); 0: leave it alone. Counts when real time is refused or given up. */
  nice: number;
}

export type FromWorker =
  /** Frames of one wake, flattened: key, text, bodyStart, bodyEnd, appliedCmdSeq, key, text, … */
  | { t: "frames"; frames: (number | string)[] }
  | { t: "created"; key: number }
  | { t: "create-failed"; key: number; message: string }
  | { t: "refused"; key: number; code: string; message: string }
  | { t: "ended"; key: number; frame: FrameText; summary: SimulationSummary; q: number[] }
  | { t: "stats"; id: number; stats: SimThreadStats };
