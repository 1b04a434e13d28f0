import { describe, expect, it } from "vitest";
import type { RecordedFrame } from "@jogwright/shared";
import { frameAtRest } from "@jogwright/shared/test-support";
import { countMarkers, extractReplayMarkers } from "./replay-markers.ts";

// The replay timeline's markers, read from recorded frames (issue 13, item 13).

const FRAME_S = 1 / 60;

/** Frame i of a recording at rest (nothing to mark); `patch` sets what a test needs. */
const frame = (i: number, patch: Partial<RecordedFrame> = {}): RecordedFrame => frameAtRest({ t: i * FRAME_S, ...patch });

const stopping = (kind: RecordedFrame["stopping"]["kind"]): Partial<RecordedFrame> => ({ stopping: { kind, isActive: true, timeS: 0.1, distanceM: 0.001 } });

describe("replay markers", () => {
  it("a quiet recording has none", () => {
    expect(extractReplayMarkers(Array.from({ length: 100 }, (_, i) => frame(i)))).toEqual([]);
  });

  it("mark each stop where it began, once, with its kind; a different stop right after is a new marker", () => {
    const frames = Array.from({ length: 60 }, (_, i) =>
      frame(i, i >= 10 && i < 20 ? stopping("enabling-released") : i >= 20 && i < 25 ? stopping("instant-halt") : i >= 40 && i < 45 ? stopping("watchdog") : {}),
    );
    const markers = extractReplayMarkers(frames);
    expect(markers.map((m) => [m.kind, m.index, m.label])).toEqual([
      ["stop", 10, "Stop: Enabling released"],
      ["stop", 20, "Stop: Instant halt (simulation)"],
      ["stop", 40, "Stop: Watchdog (input lost)"],
    ]);
    expect(markers[0]!.t).toBeCloseTo(10 * FRAME_S, 12);
  });

  it("mark the guard when it holds and when it is acknowledged, not when it clears", () => {
    const states: RecordedFrame["guardState"][] = ["clear", "clear", "stopped", "stopped", "acknowledged", "acknowledged", "clear", "stopped"];
    const markers = extractReplayMarkers(states.map((guardState, i) => frame(i, { guardState })));
    expect(markers.map((m) => [m.kind, m.index])).toEqual([
      ["guard", 2],
      ["guard", 4],
      ["guard", 7],
    ]);
    expect(markers[0]!.label).toMatch(/^Guard: Held before the singular region/);
    expect(markers[1]!.label).toMatch(/^Guard: Acknowledged/);
  });

  it("a binding limit that flickers at a cap is one marker; another joint or a gap of more than 0.5 s is a new one", () => {
    const frames = Array.from({ length: 200 }, (_, i) => {
      if (i >= 10 && i < 40 && i % 3 !== 0) return frame(i, { binding: "joint-rate", bindingJoint: 3 }); // flickering J4
      if (i >= 40 && i < 50) return frame(i, { binding: "joint-rate", bindingJoint: 5 }); // J6 takes over
      if (i >= 150 && i < 160) return frame(i, { binding: "joint-rate", bindingJoint: 5 }); // J6 again, 1.7 s later
      return frame(i);
    });
    const markers = extractReplayMarkers(frames);
    expect(markers.map((m) => [m.kind, m.index, m.label])).toEqual([
      ["binding", 10, "Limit: joint rate cap J4"],
      ["binding", 40, "Limit: joint rate cap J6"],
      ["binding", 150, "Limit: joint rate cap J6"],
    ]);
    expect(countMarkers(markers)).toEqual({ stop: 0, guard: 0, binding: 3 });
  });

  it("names the TCP caps and the range limits", () => {
    const frames = [frame(0, { binding: "tcp-linear" }), frame(1, { binding: "joint-limit", bindingJoint: 1 })];
    expect(extractReplayMarkers(frames).map((m) => m.label)).toEqual(["Limit: TCP speed cap", "Limit: range limit J2"]);
  });
});
