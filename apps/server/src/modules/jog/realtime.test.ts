import { spawnSync } from "node:child_process";
import path from "node:path";
import { describe, expect, it, vi } from "vitest";
import { hasCapSysNice } from "../../test/capabilities.ts";
import { RealtimeScheduling, RT_MAX_BUSY_FRACTION, RT_WINDOW_MS, type ChrtRunner } from "./realtime.ts";

/** A chrt that records its calls and answers as told. */
function fakeChrt(answer: (args: string[]) => string | null = () => null): ChrtRunner & { calls: string[][] } {
  const calls: string[][] = [];
  const run = ((args: string[]) => {
    calls.push(args);
    return answer(args);
  }) as ChrtRunner & { calls: string[][] };
  run.calls = calls;
  return run;
}

/** Wakes of `busyMs` every `periodMs` for `forMs`, as the tick loop reports them. */
function wakes(rt: RealtimeScheduling, busyMs: number, periodMs: number, forMs: number, fromMs = 0): void {
  for (let t = fromMs; t < fromMs + forMs; t += periodMs) rt.noteBusy(t, t + busyMs);
}

describe("real-time scheduling of the tick loop", () => {
  it("asks chrt for SCHED_RR at the configured priority on the thread's own id", () => {
    const chrt = fakeChrt();
    const rt = new RealtimeScheduling(5, 1234, chrt);
    rt.start();
    expect(chrt.calls).toEqual([["--rr", "--pid", "5", "1234"]]);
    expect(rt.priority).toBe(5);
    expect(rt.note).toBeNull();
  });

  it("keeps normal scheduling, with the reason, when refused or when chrt is missing", () => {
    const refused = new RealtimeScheduling(5, 1234, fakeChrt(() => "failed to set pid 1234's policy: Operation not permitted"));
    refused.start();
    expect(refused.priority).toBeNull();
    expect(refused.note).toBe("refused: failed to set pid 1234's policy: Operation not permitted");
    const none = new RealtimeScheduling(5, null, fakeChrt());
    none.start();
    expect(none.priority).toBeNull();
    expect(none.note).toMatch(/no \/proc\/thread-self/);
  });

  it("asks nothing when JOG_SIM_RT_PRIORITY is 0", () => {
    const chrt = fakeChrt();
    const rt = new RealtimeScheduling(0, 1234, chrt);
    rt.start();
    wakes(rt, 1, 1, 3000);
    expect(chrt.calls).toEqual([]);
    expect(rt.note).toMatch(/JOG_SIM_RT_PRIORITY=0/);
  });

  it("stays real-time while the loop sleeps between wakes (50 sessions at 1 kHz: ~0.25 ms a 1-ms wake)", () => {
    const chrt = fakeChrt();
    const rt = new RealtimeScheduling(5, 1234, chrt);
    rt.start();
    wakes(rt, 0.85, 1, 5 * RT_WINDOW_MS); // 85 %: busy, still below the bound
    expect(rt.priority).toBe(5);
    expect(chrt.calls).toHaveLength(1);
  });

  it("gives real time up for good, back to normal scheduling, once the loop is busier than the bound for a second", () => {
    const warn = vi.spyOn(console, "warn").mockImplementation(() => {});
    try {
      const chrt = fakeChrt();
      const rt = new RealtimeScheduling(5, 1234, chrt);
      rt.start();
      wakes(rt, 0.5, 1, RT_WINDOW_MS); // a quiet second
      expect(rt.priority).toBe(5);
      wakes(rt, 0.95, 1, RT_WINDOW_MS + 2, RT_WINDOW_MS); // then 95 % > RT_MAX_BUSY_FRACTION
      expect(RT_MAX_BUSY_FRACTION).toBeLessThan(0.95);
      expect(rt.priority).toBeNull();
      expect(chrt.calls.at(-1)).toEqual(["--other", "--pid", "0", "1234"]);
      expect(rt.note).toMatch(/^given up: the loop was busy 95 % of a second$/);
      wakes(rt, 0.1, 1, 3 * RT_WINDOW_MS, 3 * RT_WINDOW_MS); // quiet again: it does not come back
      expect(chrt.calls).toHaveLength(2);
      expect(warn).toHaveBeenCalledTimes(1);
    } finally {
      warn.mockRestore();
    }
  });

  // The real kernel and util-linux's chrt, in a child process (never this test runner's own thread): the
  // thread gets SCHED_RR at the priority asked, and loses it when it gives real time up. Needs CAP_SYS_NICE.
  it.runIf(process.platform === "linux" && hasCapSysNice())(
    "sets and gives up SCHED_RR on this system's kernel for the calling thread alone",
    () => {
      const script = `
        import { spawnSync } from "node:child_process";
        import { RealtimeScheduling, ownThreadId } from ${JSON.stringify(path.join(import.meta.dirname, "realtime.ts"))};
        const policy = (tid) => spawnSync("chrt", ["--pid", String(tid)], { encoding: "utf8" }).stdout.split("\\n")[0];
        const tid = ownThreadId();
        const rt = new RealtimeScheduling(7);
        rt.start();
        const seen = [tid === process.pid, rt.priority, policy(tid)];
        console.warn = () => {};
        for (let t = 0; t < 1100; t++) rt.noteBusy(t, t + 0.99);
        seen.push(rt.priority, policy(tid));
        console.log(JSON.stringify(seen));`;
      const r = spawnSync(process.execPath, ["--import", "tsx", "--input-type=module", "-e", script], { encoding: "utf8", timeout: 20_000 });
      expect(r.stderr).toBe("");
      const [isMainThread, priority, policy, after, policyAfter] = JSON.parse(r.stdout) as [boolean, number, string, number | null, string];
      expect(isMainThread).toBe(true); // a process's main thread id is its pid
      expect(priority).toBe(7);
      expect(policy).toMatch(/current scheduling policy: SCHED_RR$/);
      expect(after).toBeNull();
      expect(policyAfter).toMatch(/current scheduling policy: SCHED_OTHER$/);
    },
  );
});
