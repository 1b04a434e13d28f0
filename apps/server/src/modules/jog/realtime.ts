import { spawnSync } from "node:child_process";
import { readlinkSync } from "node:fs";

/**
 * Real-time scheduling for the simulation thread's tick loop (sim-worker.ts; issue 11: tick lateness
 * p99 ≤ 2 ms while the test suite or a build runs on the same 2 cores).
 *
 * Under normal scheduling a waking thread waits for the task on its core to finish its time slice, however
 * favoured the thread is (nice −10, and the server's autogroup, autogroup.ts): measured, tick lateness p99
 * 1.4–4.1 ms beside the test suite. A SCHED_RR thread runs as soon as it wakes (sched(7)): 0.32–0.74 ms
 * under the same load (DEVELOPERS.md "The server's autogroup and a real-time tick loop"). Control loops commonly run so (common practice, no source).
 * Node has no call for it, so util-linux's `chrt` (part of every Debian system) sets this thread's policy
 * by its thread id (/proc/thread-self). It needs CAP_SYS_NICE (root); refused, the loop keeps normal
 * scheduling and the reason is reported.
 *
 * A real-time thread that never sleeps would take its core from everything of normal priority (the kernel
 * still keeps 5 % of each second for them: /proc/sys/kernel/sched_rt_runtime_us). The tick loop sleeps
 * between wakes; should it stay busy for more than RT_MAX_BUSY_FRACTION of a second (more sessions than a
 * core can tick), it gives real-time scheduling up for good and carries on at normal priority.
 */
export const RT_WINDOW_MS = 1000;
export const RT_MAX_BUSY_FRACTION = 0.9;

/** Runs chrt with these arguments: null when it ran and succeeded, else what went wrong. */
export type ChrtRunner = (args: string[]) => string | null;

/** util-linux's chrt, by its full path (never whatever a PATH entry calls chrt: the server may run as root). */
const CHRT = "/usr/bin/chrt";

const runChrt: ChrtRunner = (args) => {
  const r = spawnSync(CHRT, args, { encoding: "utf8", timeout: 5000 });
  if (r.error) return (r.error as NodeJS.ErrnoException).code === "ENOENT" ? `${CHRT} (util-linux) is not installed` : r.error.message;
  if (r.status !== 0) return (r.stderr || `chrt exited with ${r.status}`).trim().replace(/^chrt: /, "");
  return null;
};

/** The calling thread's id (Linux), or null where /proc/thread-self does not exist. */
export function ownThreadId(): number | null {
  try {
    return Number(readlinkSync("/proc/thread-self").split("/").pop());
  } catch {
    return null;
  }
}

export class RealtimeScheduling {
  /** The SCHED_RR priority in effect, or null. */
  priority: number | null = null;
  /** Why the thread runs without it (null while it has it). */
  note: string | null;
  private windowStartMs = Number.NaN;
  private busyMs = 0;

  constructor(
    private readonly asked: number,
    private readonly tid: number | null = ownThreadId(),
    private readonly run: ChrtRunner = runChrt,
  ) {
    this.note = asked === 0 ? "not asked for (JOG_SIM_RT_PRIORITY=0)" : null;
  }

  /** Asks for SCHED_RR at the configured priority for the thread (once, at its start). */
  start(): void {
    if (this.asked === 0) return;
    if (this.tid === null) {
      this.note = "this system has no /proc/thread-self";
      return;
    }
    const failure = this.run(["--rr", "--pid", String(this.asked), String(this.tid)]);
    if (failure === null) this.priority = this.asked;
    else this.note = `refused: ${failure}`;
  }

  /** Counts one wake's work (from its wake to its sleep, this thread's clock); gives real time up when too busy. */
  noteBusy(fromMs: number, toMs: number): void {
    if (this.priority === null) return;
    if (Number.isNaN(this.windowStartMs)) this.windowStartMs = fromMs;
    this.busyMs += toMs - fromMs;
    const windowMs = toMs - this.windowStartMs;
    if (windowMs < RT_WINDOW_MS) return;
    const share = this.busyMs / windowMs;
    this.windowStartMs = toMs;
    this.busyMs = 0;
    if (share > RT_MAX_BUSY_FRACTION) this.giveUp(`given up: the loop was busy ${(share * 100).toFixed(0)} % of a second`);
  }

  private giveUp(note: string): void {
    this.run(["--other", "--pid", "0", String(this.tid)]);
    this.priority = null;
    this.note = note;
    console.warn(`[jogwright] warning: the simulation thread's real-time scheduling was ${note}; it runs at normal priority now.`);
  }
}
