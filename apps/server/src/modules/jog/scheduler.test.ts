import { performance } from "node:perf_hooks";
import { afterEach, describe, expect, it, vi } from "vitest";
import { FRAME_BURST, MAX_FRAMES_PER_S, TickScheduler, type ScheduledClient } from "./scheduler.ts";

/**
 * Issue 11, "Input that feels instant": a tick that applies an input which changes the commanded motion
 * gets its frame at the same wake, not at the next slot of the 60 Hz frame grid nor after a gap since the
 * last frame; never more than 120 frames/s (a burst of FRAME_BURST on top, spread evenly under a flood). The scheduler's clock is stubbed, so these are exact and do not depend on the machine's load.
 */
let clock = 0;
afterEach(() => vi.restoreAllMocks());

function fakeClient(changeAtTicks: Set<number>): ScheduledClient & { frames: number[]; ticks: number; isFrameWanted: boolean } {
  return {
    tickPeriodMs: 1, // 1 kHz
    framePeriodMs: 1000 / 60,
    frames: [],
    ticks: 0,
    isFrameWanted: false,
    runTick() {
      this.ticks++;
      if (changeAtTicks.has(this.ticks)) this.isFrameWanted = true;
    },
    noteOverrun() {},
    runFrame() {
      this.isFrameWanted = false;
      this.frames.push(clock);
    },
  };
}

/** Runs the scheduler once per simulated millisecond for `ms`. */
function runFor(scheduler: TickScheduler, ms: number): void {
  for (let i = 0; i < ms; i++) {
    clock += 1;
    scheduler.runDue();
  }
}

describe("frames after a changed input", () => {
  it("sends the frame at the wake of the tick that applied the change, instead of up to 16.7 ms later", () => {
    clock = 1000;
    vi.spyOn(performance, "now").mockImplementation(() => clock);
    const scheduler = new TickScheduler();
    // Grid frames at 1017, 1034, 1051 … (the first client's grid starts at its add, 1000).
    const client = fakeClient(new Set([45]));
    scheduler.add(client);
    runFor(scheduler, 44);
    const before = client.frames.length;
    runFor(scheduler, 1); // tick 45 applies the change, 6 ms before the grid's next frame
    expect(client.frames.length).toBe(before + 1);
    expect(client.frames.at(-1)).toBe(clock);
  });

  it("a change soon after a frame gets its frame at once too, and the grid then runs from that frame", () => {
    clock = 1000;
    vi.spyOn(performance, "now").mockImplementation(() => clock);
    const scheduler = new TickScheduler();
    const client = fakeClient(new Set([37])); // 3 ms after the grid frame at 1034
    scheduler.add(client);
    runFor(scheduler, 80);
    const at = client.frames.indexOf(1037);
    expect(at).toBeGreaterThan(0);
    expect(client.frames[at - 1]).toBe(1034);
    // The next frames come a frame period after the input's frame (1053.7 → the wake at 1054), not at 1051.
    expect(client.frames[at + 1]).toBe(1054);
    expect(client.frames).not.toContain(1051);
  });

  it("inputs at 60 to 120 Hz get their frame at once, with no grid frame between them", () => {
    for (const hz of [60, 90, 120]) {
      clock = 1000;
      vi.spyOn(performance, "now").mockImplementation(() => clock);
      const scheduler = new TickScheduler();
      const changes = new Set(Array.from({ length: hz }, (_, i) => 1 + Math.round((i * 1000) / hz)));
      const client = fakeClient(changes);
      scheduler.add(client);
      runFor(scheduler, 1000);
      const changeTimes = [...changes].map((tick) => 1000 + tick);
      // Each input's frame at its own wake.
      for (const t of changeTimes) expect(client.frames).toContain(t);
      // Between two inputs (at most 16.7 ms apart) the grid sends nothing; before the first, it may.
      expect(client.frames.filter((t) => t > changeTimes[0]!).length).toBe(changeTimes.length - 1);
      vi.restoreAllMocks();
    }
  });

  it("without a change, frames follow the 60 Hz grid only", () => {
    clock = 1000;
    vi.spyOn(performance, "now").mockImplementation(() => clock);
    const scheduler = new TickScheduler();
    const client = fakeClient(new Set());
    scheduler.add(client);
    runFor(scheduler, 1000);
    expect(client.frames.length).toBeGreaterThanOrEqual(59);
    expect(client.frames.length).toBeLessThanOrEqual(60);
  });

  it("a change at every tick still gives at most 120 frames/s, spread evenly", () => {
    clock = 1000;
    vi.spyOn(performance, "now").mockImplementation(() => clock);
    const scheduler = new TickScheduler();
    const client = fakeClient(new Set(Array.from({ length: 3000 }, (_, i) => i + 1)));
    scheduler.add(client);
    runFor(scheduler, 2500);
    // Every window of one second, starting at any frame, holds at most 120 frames plus the burst; a second
    // after the first holds 120 at most.
    const f = client.frames;
    for (let i = 0; i < f.length; i++) expect(f.filter((t) => t >= f[i]! && t < f[i]! + 1000).length).toBeLessThanOrEqual(MAX_FRAMES_PER_S + FRAME_BURST);
    expect(f.filter((t) => t >= 2000 && t < 3000).length).toBeLessThanOrEqual(MAX_FRAMES_PER_S);
    expect(f.filter((t) => t >= 2000 && t < 3000).length).toBeGreaterThanOrEqual(MAX_FRAMES_PER_S - 1);
    // Spread evenly, not spent at the start of a second: after the first burst, no gap longer than the
    // refill period rounded up to the next tick wake.
    const gaps = f.slice(FRAME_BURST + 1).map((t, i) => t - f[i + FRAME_BURST]!);
    expect(Math.max(...gaps)).toBeLessThanOrEqual(Math.ceil(1000 / MAX_FRAMES_PER_S));
  });
});
