import { performance } from "node:perf_hooks";
import { afterEach, describe, expect, it, vi } from "vitest";
import { MIN_FRAME_GAP_MS, TickScheduler, type ScheduledClient } from "./scheduler.ts";

/**
 * Issue 11, "Input that feels instant": a tick that applies an input which changes the commanded motion
 * gets its frame at the same wake, not at the next slot of the 60 Hz frame grid; never more than 120
 * frames/s. The scheduler's clock is stubbed, so these are exact and do not depend on the machine's load.
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

  it("a change soon after a frame waits only for the 8.33 ms gap, not for the grid", () => {
    clock = 1000;
    vi.spyOn(performance, "now").mockImplementation(() => clock);
    const scheduler = new TickScheduler();
    const client = fakeClient(new Set([37])); // 3 ms after the grid frame at 1034
    scheduler.add(client);
    runFor(scheduler, 45);
    expect(client.frames).toContain(1043); // the first wake ≥ 1034 + 8.33, not the grid's 1051
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

  it("a change at every tick still gives at most 120 frames per second, never two within 8.33 ms", () => {
    clock = 1000;
    vi.spyOn(performance, "now").mockImplementation(() => clock);
    const scheduler = new TickScheduler();
    const client = fakeClient(new Set(Array.from({ length: 2000 }, (_, i) => i + 1)));
    scheduler.add(client);
    runFor(scheduler, 1000);
    expect(client.frames.length).toBeLessThanOrEqual(120);
    expect(client.frames.length).toBeGreaterThan(100);
    const gaps = client.frames.slice(1).map((t, i) => t - client.frames[i]!);
    expect(Math.min(...gaps)).toBeGreaterThanOrEqual(MIN_FRAME_GAP_MS);
  });
});
