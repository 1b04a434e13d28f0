import { performance } from "node:perf_hooks";

/**
 * One schedule for every live simulation, run by the simulation thread (sim-worker.ts). Each client keeps
 * its own absolute schedule (t0 + k·period, an integer k, so there is no cumulative drift); on every wake
 * the scheduler runs each client's due ticks (bounded catch-up), then its due frame, and returns the
 * earliest next deadline for the thread to sleep until. The lateness (wake − scheduled) of every tick goes
 * into a histogram the benchmark reads. All times are this thread's performance.now (ms).
 */

/** Catch-up bound per wake; further behind than this, the extra ticks are skipped and counted as overruns. */
export const MAX_CATCH_UP_TICKS = 25;

/** A wake later than this counts as a stall of the process (normal lateness is about 1 ms). */
export const STALL_THRESHOLD_MS = 10;

export interface ScheduledClient {
  /**
   * Runs one tick; nowMs is the wake time. stalledMs is the scheduler's running total of stalls: wakes of
   * the simulation thread later than STALL_THRESHOLD_MS, and spells of the main thread's event loop not
   * turning (inputs sit unread in the sockets meanwhile). The watchdog subtracts stalls from silence, so a
   * pause of the server itself (GC, a busy machine, a blocked main thread) is never taken for a silent client.
   */
  runTick(nowMs: number, stalledMs: number): void;
  /** Called when ticks had to be skipped. */
  noteOverrun(skipped: number): void;
  /** Sends one frame. */
  runFrame(): void;
  /** True when a tick applied a change of the commanded motion: a frame goes out at this wake (if the gap allows). */
  readonly isFrameWanted?: boolean;
  readonly tickPeriodMs: number;
  readonly framePeriodMs: number;
  /** Scheduler bookkeeping (set by add). */
  schedule?: ClientSchedule;
}

interface ClientSchedule {
  t0: number;
  tickIndex: number;
  nextTickMs: number;
  f0: number;
  frameIndex: number;
  nextFrameMs: number;
  /** Frames the client may still get at once (a token bucket: FRAME_BURST at most, refilled at MAX_FRAMES_PER_S). */
  frameTokens: number;
  tokensAtMs: number;
}

/**
 * Frames per second one client gets at most (issue 11: "at most 120 frames/s per client"), whether from the
 * frame grid or sent at once after an input that changed the commanded motion: a token bucket refilled at
 * this rate, holding FRAME_BURST frames, so a flood is spread evenly rather than spent at the start of a
 * second, and two inputs that come close together (a 120 Hz stream's jitter) both get their frame at once.
 * Any one second holds at most MAX_FRAMES_PER_S + FRAME_BURST frames.
 */
export const MAX_FRAMES_PER_S = 120;
export const FRAME_BURST = 2;

/** Lateness histogram: 10 µs buckets up to 100 ms, the last bucket catches everything later. */
export class LatenessHistogram {
  static readonly BUCKET_US = 10;
  readonly counts = new Float64Array(10_001);
  total = 0;
  maxMs = 0;

  record(latenessMs: number): void {
    const ms = latenessMs < 0 ? 0 : latenessMs;
    let b = Math.floor((ms * 1000) / LatenessHistogram.BUCKET_US);
    if (b >= this.counts.length) b = this.counts.length - 1;
    this.counts[b]!++;
    this.total++;
    if (ms > this.maxMs) this.maxMs = ms;
  }

  /** The p-quantile (0…1) in ms (upper edge of its bucket). */
  quantileMs(p: number): number {
    if (this.total === 0) return 0;
    const want = Math.ceil(p * this.total);
    let seen = 0;
    for (let i = 0; i < this.counts.length; i++) {
      seen += this.counts[i]!;
      if (seen >= want) return ((i + 1) * LatenessHistogram.BUCKET_US) / 1000;
    }
    return this.maxMs;
  }

  reset(): void {
    this.counts.fill(0);
    this.total = 0;
    this.maxMs = 0;
  }
}

/**
 * The schedules of every live simulation; the caller (the simulation thread's loop, sim-worker.ts) owns the
 * sleeping: it calls runDue at each wake and sleeps until the deadline it returns. runDue allocates nothing.
 */
export class TickScheduler {
  private readonly clients: ScheduledClient[] = [];
  readonly lateness = new LatenessHistogram();
  /** Running total of stalls (this thread's wakes later than STALL_THRESHOLD_MS, and the main thread's). */
  stalledMs = 0;
  overrunTicks = 0;
  wakes = 0;
  private added = 0;

  get size(): number {
    return this.clients.length;
  }

  /**
   * Ticks run on a grid common to all clients of one tick rate (multiples of the period on this thread's
   * clock), so at 1 kHz one wake per millisecond runs every session's tick, instead of one wake per session
   * phase (50 phases: 50 sleeps per millisecond, each one late by the sleep's own jitter). Frames are spread
   * over the frame period instead (golden-ratio offsets), so a wake builds few of them, and they are built at
   * tick wakes (see runDue).
   */
  add(client: ScheduledClient): void {
    const now = performance.now();
    const t0 = Math.floor(now / client.tickPeriodMs) * client.tickPeriodMs;
    const f0 = now + ((this.added++ * 0.6180339887) % 1) * client.framePeriodMs;
    client.schedule = {
      t0, tickIndex: 1, nextTickMs: t0 + client.tickPeriodMs,
      f0, frameIndex: 1, nextFrameMs: f0 + client.framePeriodMs,
      frameTokens: FRAME_BURST, tokensAtMs: now,
    };
    this.clients.push(client);
  }

  remove(client: ScheduledClient): void {
    const i = this.clients.indexOf(client);
    if (i >= 0) this.clients.splice(i, 1);
  }

  stop(): void {
    this.clients.length = 0;
  }

  /** Adds a stall (ms) to the running total the watchdogs subtract from silence. */
  noteStall(ms: number): void {
    this.stalledMs += ms;
  }

  /** Runs every client's due ticks and due frame; returns the earliest next deadline (Infinity when idle). */
  runDue(): number {
    this.wakes++;
    // Two passes: every client's due ticks first, then the due frames, so building a frame (~10 µs) never
    // delays another session's tick in the same wake.
    for (let c = 0; c < this.clients.length; c++) {
      const client = this.clients[c]!;
      const s = client.schedule!;
      const now = performance.now();
      let ran = 0;
      while (s.nextTickMs <= now && ran < MAX_CATCH_UP_TICKS) {
        this.lateness.record(now - s.nextTickMs);
        try {
          client.runTick(now, this.stalledMs);
        } catch (error) {
          console.error("[jogwright] jog tick failed:", error);
        }
        ran++;
        s.tickIndex++;
        s.nextTickMs = s.t0 + s.tickIndex * client.tickPeriodMs;
      }
      if (s.nextTickMs <= now) {
        // Too far behind: skip to the next future tick instead of racing (counted, shown as a warning).
        const skipped = Math.floor((now - s.nextTickMs) / client.tickPeriodMs) + 1;
        s.tickIndex += skipped;
        s.nextTickMs = s.t0 + s.tickIndex * client.tickPeriodMs;
        this.overrunTicks += skipped;
        client.noteOverrun(skipped);
      }
      if (this.clients[c] !== client) c--; // removed during its tick
    }
    let next = Infinity;
    for (let c = 0; c < this.clients.length; c++) {
      const client = this.clients[c]!;
      const s = client.schedule!;
      const now = performance.now();
      // A frame is due on the grid, or at once after a tick that applied a changed command; either way only
      // with a token in the client's bucket (else it waits for a later tick wake). A frame sent at once
      // re-phases the grid to itself, so a stream of inputs gets a frame per input and no grid frames in
      // between: an input never waits for a grid slot.
      const isDue = s.nextFrameMs <= now;
      if ((isDue || client.isFrameWanted === true) && takeFrameToken(s, now)) {
        try {
          client.runFrame();
        } catch (error) {
          console.error("[jogwright] jog frame failed:", error);
        }
        if (isDue) {
          s.frameIndex++;
          s.nextFrameMs = s.f0 + s.frameIndex * client.framePeriodMs;
        } else {
          s.f0 = now;
          s.frameIndex = 1;
          s.nextFrameMs = now + client.framePeriodMs;
        }
        if (s.nextFrameMs <= now) {
          // More than a frame behind: drop the missed frames rather than burst them.
          s.frameIndex += Math.floor((now - s.nextFrameMs) / client.framePeriodMs) + 1;
          s.nextFrameMs = s.f0 + s.frameIndex * client.framePeriodMs;
        }
      }
      if (this.clients[c] !== client) {
        c--; // removed during its frame
        continue;
      }
      // Only ticks set the wake-ups: a frame is built at the first tick wake at or after its deadline
      // (late by less than one tick period), so frames add no wake-ups of their own.
      if (s.nextTickMs < next) next = s.nextTickMs;
    }
    return next;
  }
}

/** Refills the client's frame bucket up to `now` and takes one token; false (nothing taken) when empty. */
function takeFrameToken(s: ClientSchedule, now: number): boolean {
  const tokens = s.frameTokens + ((now - s.tokensAtMs) * MAX_FRAMES_PER_S) / 1000;
  s.tokensAtMs = now;
  if (tokens < 1) {
    s.frameTokens = tokens;
    return false;
  }
  s.frameTokens = (tokens < FRAME_BURST ? tokens : FRAME_BURST) - 1;
  return true;
}
