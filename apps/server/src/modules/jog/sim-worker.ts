import { getPriority, setPriority } from "node:os";
import { performance } from "node:perf_hooks";
import { parentPort, receiveMessageOnPort, workerData, type MessagePort } from "node:worker_threads";
import { TickScheduler, STALL_THRESHOLD_MS, type ScheduledClient } from "./scheduler.ts";
import {
  INPUT_HEADER, SIGNAL_DOORBELL, SIGNAL_HEARTBEAT,
  type FromWorker, type SimThreadOptions, type SimThreadStats, type ToWorker, type ToWorkerBatch,
} from "./sim-messages.ts";
import { RealtimeScheduling } from "./realtime.ts";
import { JogSimulation } from "./simulation.ts";

/**
 * The simulation thread (started by sim-thread.ts): every live JogSimulation and the one TickScheduler, so
 * the tick loop never waits on the main thread's socket I/O, parsing, database or GC. A plain synchronous
 * loop: drain the inbox (receiveMessageOnPort), run the due ticks and frames, post the frames of this wake
 * in one message, sleep in Atomics.wait on the doorbell until the next deadline (sub-ms timeout; a control
 * message from the main thread rings the doorbell and wakes it at once). Every SLICE_MS it returns to the
 * event loop for one turn. Times are this thread's performance.now (its origin differs from the main
 * thread's, so no time ever crosses the thread boundary: arrival times are stamped here).
 */

/** How long the loop runs before yielding one event-loop turn (ms; common practice, no source). */
const SLICE_MS = 200;
/** Longest sleep when nothing is scheduled (ms); a doorbell wakes it sooner. */
const IDLE_WAIT_MS = 100;

const { inbox, signals: signalBuffer, options } = workerData as { inbox: MessagePort; signals: SharedArrayBuffer; options: SimThreadOptions };

/**
 * The nice value this thread asks for (JOG_SIM_NICE, default −10; 0: leave it alone). On Linux nice is per
 * thread (setpriority(2) with 0 applies to the calling thread), so only the tick loop is favoured over the
 * main thread and other processes; without the privilege (CAP_SYS_NICE) the request fails and the thread
 * runs at normal priority (both measured in DEVELOPERS.md "Live jogging").
 */
function raisePriority(nice: number): number | null {
  if (nice === 0) return null;
  try {
    setPriority(0, nice);
    return getPriority(0);
  } catch {
    return null;
  }
}
const niceInEffect = raisePriority(options.nice);
// SCHED_RR for this thread where permitted (realtime.ts); nice −10 above stays for when it is refused or given up.
const realtime = new RealtimeScheduling(options.realtimePriority);
realtime.start();
if (options.realtimePriority !== 0 && realtime.priority === null) {
  console.warn(`[jogwright] the simulation thread runs without real-time scheduling (${realtime.note}); ticks may be late on a busy machine.`);
}
const signals = new Int32Array(signalBuffer);
const out = parentPort!;

class WorkerSession implements ScheduledClient {
  readonly tickPeriodMs: number;
  schedule?: ScheduledClient["schedule"];
  /** cmdSeq of the last control message applied (sim-messages.ts). */
  appliedCmdSeq = 0;
  private readonly prefix: string;

  constructor(readonly key: number, readonly sessionId: string, readonly sim: JogSimulation, readonly framePeriodMs: number) {
    this.tickPeriodMs = 1000 / sim.tickRateHz;
    this.prefix = `{"type":"state","sessionId":"${sessionId}",`;
  }

  /** A tick applied an input that changed the commanded motion: its frame goes out at this wake. */
  isFrameWanted = false;

  runTick(_nowMs: number, stalledMs: number): void {
    // The simulation's time is its tick counter (the motion gate's watchdog counts ticks, stalls excused).
    this.sim.tick(stalledMs);
    if (this.sim.isCommandChanged) {
      this.sim.isCommandChanged = false;
      this.isFrameWanted = true;
    }
  }

  noteOverrun(skipped: number): void {
    this.sim.noteOverrun(skipped);
  }

  runFrame(): void {
    this.isFrameWanted = false;
    const text = this.frameText();
    pendingFrames.push(this.key, text, this.prefix.length, this.bodyEnd, this.appliedCmdSeq);
  }

  /** End of the recorded body in the latest frameText (it starts at prefix.length). */
  bodyEnd = 0;

  /** The state frame as sent; the recorded body (without braces) lies between prefix and suffix. Frame rate only. */
  frameText(): string {
    const body = this.sim.frameBody();
    const t = this.sim.lastInputClientTimeMs;
    this.bodyEnd = this.prefix.length + body.length;
    return (
      this.prefix + body +
      `,"lastInputSeq":${this.sim.lastInputSeq},"lastInputClientTimeMs":${Number.isFinite(t) ? t : 0}}`
    );
  }

  get bodyStart(): number {
    return this.prefix.length;
  }
}

const scheduler = new TickScheduler();
const sessions = new Map<number, WorkerSession>();
/**
 * Longest a controlled stop before an end may take [s]; past it the session ends anyway (its end zeroes the
 * rates). The site ceilings bound a compliant profile's stop far below it (50 mm at ≥ 0.5 m/s²: v ≤ 0.22
 * m/s, T = v/a ≤ 0.45 s; derived); a flagged version an engineer test-drives may exceed them.
 */
const END_STOP_MAX_S = 2;
/** Sessions ending after a controlled stop (ToWorker "end" afterControlledStop): key → when to end regardless. */
const endingAfterStop = new Map<number, { session: WorkerSession; deadlineMs: number }>();
/** Frames built during the current wake (flattened, see FromWorker "frames"). */
let pendingFrames: (number | string)[] = [];
let isClosing = false;

function post(message: FromWorker): void {
  out.postMessage(message);
}

function handle(msg: ToWorker, nowMs: number): void {
  switch (msg.t) {
    case "command": {
      const s = sessions.get(msg.key);
      if (!s) return;
      s.appliedCmdSeq = msg.cmdSeq;
      const sim = s.sim;
      switch (msg.command) {
        case "estop":
          return sim.emergencyStop();
        case "reset-estop":
          return sim.resetEstop();
        case "acknowledge":
          return sim.acknowledge();
        case "require-release":
          return sim.requireRelease("the input device reconnected");
        case "dropped":
          sim.noteDroppedInput();
          return;
        case "ready-pose":
          if (sim.isEstopLatched) return post({ t: "refused", key: s.key, code: "estop_latched", message: "Reset the emergency stop first." });
          if (!sim.isStopped) {
            return post({ t: "refused", key: s.key, code: "not_stopped", message: "Release the enabling control and wait for the arm to stop first." });
          }
          return sim.moveToReadyPose();
      }
      return;
    }
    case "create": {
      try {
        const sim = new JogSimulation(msg.setup);
        sessions.set(msg.key, new WorkerSession(msg.key, msg.sessionId, sim, msg.framePeriodMs));
        post({ t: "created", key: msg.key });
      } catch (error) {
        post({ t: "create-failed", key: msg.key, message: (error as Error).message ?? String(error) });
      }
      return;
    }
    case "run": {
      const s = sessions.get(msg.key);
      if (s) scheduler.add(s);
      return;
    }
    case "discard": {
      const s = sessions.get(msg.key);
      if (s) scheduler.remove(s);
      sessions.delete(msg.key);
      return;
    }
    case "end": {
      const s = sessions.get(msg.key);
      if (!s) return;
      s.appliedCmdSeq = msg.cmdSeq;
      if (msg.afterControlledStop && !s.sim.isAtRest) {
        // A controlled stop from the next tick (no input reaches this session any more); it keeps ticking
        // and sending frames until it is at rest (endStoppedSessions).
        s.sim.requireRelease("the session is ending");
        endingAfterStop.set(s.key, { session: s, deadlineMs: nowMs + END_STOP_MAX_S * 1000 });
        return;
      }
      endSession(s);
      return;
    }
    case "stats": {
      post({ t: "stats", id: msg.id, stats: stats() });
      if (msg.reset) {
        scheduler.lateness.reset();
        scheduler.overrunTicks = 0;
        scheduler.wakes = 0;
      }
      return;
    }
    case "crash-for-test":
      throw new Error("simulation thread: crash requested by a test");
    case "close":
      isClosing = true;
      return;
  }
}

/** Stops ticking the session and posts its last frame ("session-ended"), summary and final joint positions. */
function endSession(s: WorkerSession): void {
  scheduler.remove(s);
  sessions.delete(s.key);
  endingAfterStop.delete(s.key);
  s.sim.end();
  const text = s.frameText();
  post({
    t: "ended", key: s.key,
    frame: { text, bodyStart: s.bodyStart, bodyEnd: s.bodyEnd },
    summary: s.sim.summary(),
    q: Array.from(s.sim.state.q),
  });
}

/** Ends the sessions whose controlled stop before their end has come to rest (or run out of time). */
function endStoppedSessions(nowMs: number): void {
  for (const { session, deadlineMs } of [...endingAfterStop.values()]) {
    if (session.sim.isAtRest || nowMs >= deadlineMs) endSession(session);
  }
}

/** A run of inputs (layout in sim-messages.ts), validated by the main thread (schema and axis count). */
function applyInputs(a: Float64Array): void {
  let i = 0;
  while (i + INPUT_HEADER <= a.length) {
    const count = a[i + 7]!;
    const s = sessions.get(a[i]!);
    const mode = a[i + 4] === 1 ? "joint" : "cartesian";
    // The axis count was checked on the main thread; checked again so a mismatch can never index past the axes.
    if (s && count === (mode === "joint" ? s.sim.n : 6)) {
      s.sim.applyInputValues(a[i + 1]!, a[i + 2]!, a[i + 3] === 1, mode, a[i + 5] === 1 ? "tool" : "world", a[i + 6]!, a, i + INPUT_HEADER);
    }
    i += INPUT_HEADER + count;
  }
}

function stats(): SimThreadStats {
  const h = scheduler.lateness;
  return {
    ticks: h.total,
    latenessP50Ms: h.quantileMs(0.5),
    latenessP99Ms: h.quantileMs(0.99),
    latenessP999Ms: h.quantileMs(0.999),
    latenessMaxMs: h.maxMs,
    overrunTicks: scheduler.overrunTicks,
    stalledMs: scheduler.stalledMs,
    wakes: scheduler.wakes,
    sessions: sessions.size,
    nice: niceInEffect,
    realtimePriority: realtime.priority,
    realtimeNote: realtime.note,
  };
}

function drainInbox(): void {
  for (;;) {
    const received = receiveMessageOnPort(inbox);
    if (!received) return;
    // A batch sent in order by the main thread (sim-thread.ts); arrival stamped with this thread's clock.
    const batch = received.message as ToWorkerBatch;
    const now = performance.now();
    for (let i = 0; i < batch.length; i++) {
      const item = batch[i]!;
      if (item instanceof Float64Array) applyInputs(item);
      else handle(item, now);
    }
  }
}

// Stall accounting (see ScheduledClient.runTick): this thread's own late wakes, and the main thread's
// heartbeat not moving for longer than STALL_THRESHOLD_MS (its event loop is not turning, so inputs sit
// unread in the sockets). Per wake the larger of the two is added, so a stall of the whole process is not
// counted twice.
let plannedWakeMs = Infinity;
let lastWakeMs = performance.now();
let heartbeatSeen = Atomics.load(signals, SIGNAL_HEARTBEAT);
let heartbeatSeenAtMs = lastWakeMs;

function accountStalls(nowMs: number): void {
  const ownLateMs = nowMs - plannedWakeMs;
  const own = ownLateMs > STALL_THRESHOLD_MS ? ownLateMs : 0;
  let main = 0;
  const beat = Atomics.load(signals, SIGNAL_HEARTBEAT);
  if (beat !== heartbeatSeen) {
    heartbeatSeen = beat;
    heartbeatSeenAtMs = nowMs;
  } else if (nowMs - heartbeatSeenAtMs > STALL_THRESHOLD_MS) {
    // Main thread silent: count the time since it was last seen alive (or since the last wake).
    main = nowMs - Math.max(heartbeatSeenAtMs, lastWakeMs);
  }
  const stall = own > main ? own : main;
  if (stall > 0) scheduler.noteStall(stall);
  lastWakeMs = nowMs;
}

function flushFrames(): void {
  if (pendingFrames.length === 0) return;
  post({ t: "frames", frames: pendingFrames });
  pendingFrames = [];
}

function loop(): void {
  const sliceEndMs = performance.now() + SLICE_MS;
  for (;;) {
    const wokeMs = performance.now();
    const rung = Atomics.load(signals, SIGNAL_DOORBELL);
    drainInbox();
    flushFrames(); // an `ended` frame or a refusal never overtakes frames built before it
    if (isClosing) {
      inbox.close();
      out.close();
      return;
    }
    const now = performance.now();
    accountStalls(now);
    const next = scheduler.runDue();
    flushFrames();
    // After the frames of this wake, so an `ended` never overtakes the stop's last frames.
    if (endingAfterStop.size > 0) endStoppedSessions(performance.now());
    const after = performance.now();
    realtime.noteBusy(wokeMs, after);
    if (after >= sliceEndMs) {
      plannedWakeMs = Infinity;
      setImmediate(loop);
      return;
    }
    plannedWakeMs = next;
    const waitMs = next === Infinity ? IDLE_WAIT_MS : next - after;
    // Atomics.wait sleeps on a futex with a sub-ms timeout (no 1 ms timer granularity); a doorbell wakes it.
    if (waitMs > 0) Atomics.wait(signals, SIGNAL_DOORBELL, rung, waitMs);
  }
}

setImmediate(loop);
