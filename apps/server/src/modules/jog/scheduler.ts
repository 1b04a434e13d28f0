import { performance } from "node:perf_hooks";

/**
 * One timer for every live simulation. Each client keeps its own absolute schedule (t0 + k·period, an
 * integer k, so there is no cumulative drift); on every wake the scheduler runs each client's due ticks
 * (bounded catch-up), then its due frame, then sleeps until the earliest next deadline. Node's timers have
 * 1 ms granularity, so at 1 kHz a tick runs up to about 1 ms late; the lateness (wake − scheduled) of
 * every tick goes into a histogram the benchmark reads.
 */

/** Catch-up bound per wake; further behind than this, the extra ticks are skipped and counted as overruns. */
export const MAX_CATCH_UP_TICKS = 25;

/** A wake later than this counts as a stall of the process (normal lateness is about 1 ms). */
export const STALL_THRESHOLD_MS = 10;

export interface ScheduledClient {
  /**
   * Runs one tick; nowMs is the wake time. stalledMs is the scheduler's running total of time this process
   * was stalled (wakes later than STALL_THRESHOLD_MS): the watchdog subtracts stalls from silence, so a
   * pause of the server itself (GC, a busy machine) is never taken for a silent client.
   */
  runTick(nowMs: number, stalledMs: number): void;
  /** Called when ticks had to be skipped. */
  noteOverrun(skipped: number): void;
  /** Sends one frame. */
  runFrame(): void;
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
}

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

export class TickScheduler {
  private readonly clients: ScheduledClient[] = [];
  private timer: NodeJS.Timeout | null = null;
  private wakeAtMs = Infinity;
  readonly lateness = new LatenessHistogram();
  /** Running total of stalls: wake lateness beyond STALL_THRESHOLD_MS. */
  stalledMs = 0;
  overrunTicks = 0;
  wakes = 0;

  get size(): number {
    return this.clients.length;
  }

  add(client: ScheduledClient): void {
    const now = performance.now();
    client.schedule = {
      t0: now, tickIndex: 1, nextTickMs: now + client.tickPeriodMs,
      f0: now, frameIndex: 1, nextFrameMs: now + client.framePeriodMs,
    };
    this.clients.push(client);
    this.arm(client.schedule.nextTickMs);
  }

  remove(client: ScheduledClient): void {
    const i = this.clients.indexOf(client);
    if (i >= 0) this.clients.splice(i, 1);
    if (this.clients.length === 0 && this.timer) {
      clearTimeout(this.timer);
      this.timer = null;
      this.wakeAtMs = Infinity;
    }
  }

  stop(): void {
    this.clients.length = 0;
    if (this.timer) clearTimeout(this.timer);
    this.timer = null;
    this.wakeAtMs = Infinity;
  }

  private arm(atMs: number): void {
    if (this.timer && atMs >= this.wakeAtMs) return;
    if (this.timer) clearTimeout(this.timer);
    this.wakeAtMs = atMs;
    const delay = Math.max(0, Math.floor(atMs - performance.now()));
    this.timer = setTimeout(this.wake, delay);
  }

  private readonly wake = (): void => {
    const lateByMs = performance.now() - this.wakeAtMs;
    if (lateByMs > STALL_THRESHOLD_MS) this.stalledMs += lateByMs;
    this.timer = null;
    this.wakeAtMs = Infinity;
    this.wakes++;
    let next = Infinity;
    // Iterate over a snapshot length: a client removed during its own tick shifts the array.
    for (let c = 0; c < this.clients.length; c++) {
      const client = this.clients[c]!;
      const s = client.schedule!;
      let now = performance.now();
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
      now = performance.now();
      if (s.nextFrameMs <= now) {
        try {
          client.runFrame();
        } catch (error) {
          console.error("[jogwright] jog frame failed:", error);
        }
        s.frameIndex++;
        s.nextFrameMs = s.f0 + s.frameIndex * client.framePeriodMs;
        if (s.nextFrameMs <= now) {
          // More than a frame behind: drop the missed frames rather than burst them.
          s.frameIndex += Math.floor((now - s.nextFrameMs) / client.framePeriodMs) + 1;
          s.nextFrameMs = s.f0 + s.frameIndex * client.framePeriodMs;
        }
      }
      if (this.clients[c] !== client) c--; // removed during its tick or frame
      const due = Math.min(s.nextTickMs, s.nextFrameMs);
      if (due < next) next = due;
    }
    if (this.clients.length > 0 && next < Infinity) this.arm(next);
  };
}
