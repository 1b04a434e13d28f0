import { describe, expect, it } from "vitest";
import { FrameTrace } from "../../../lib/frame-trace.ts";
import { shapeAxis } from "@jogwright/kinematics";

describe("stick shaping (the shared shapeAxis, as the device calibration uses it)", () => {
  it("zeroes values inside the deadband and rescales the rest to reach full deflection", () => {
    // Deadband with rescaling, out = (|x| − d)/(1 − d)·sign(x) (common practice, PRODUCT.md); expo 0.
    expect(shapeAxis(0.05, 0.1, 0)).toBe(0);
    expect(shapeAxis(0.55, 0.1, 0)).toBeCloseTo(0.5, 12);
    expect(shapeAxis(-1, 0.1, 0)).toBe(-1);
  });

  it("applies the expo curve (1 − e)·x + e·x³ after the deadband", () => {
    // Derived: x = 0.5, e = 0.3 → 0.35 + 0.0375 = 0.3875.
    expect(shapeAxis(0.5, 0, 0.3)).toBeCloseTo(0.3875, 12);
    expect(shapeAxis(1, 0, 1)).toBe(1);
  });
});

describe("frame trace", () => {
  const frame = (t: number) => ({
    t, q: [0, 0], qdot: [Math.PI, 0], pose: new Array(16).fill(0), twistCommanded: [0.3, 0.4, 0, 0, 0, 0],
    twistAchieved: [0, 0, 0, 0, 0, 0], sigmaMin: 0.05, manipulability: 0, lambda: 0.01,
    scales: { jointRate: 1, tcpLinear: 1, tcpAngular: 1, jointLimit: 1 }, binding: "none" as const, bindingJoint: -1,
    guardState: "off" as const, enabled: true, estopLatched: false, stopReason: "none" as const, overridePercent: 50, warnings: [],
    stopping: { kind: "enabling-released" as const, isActive: false, timeS: 0, distanceM: 0 },
    stopPredictions: {
      "enabling-released": { timeS: 0, distanceM: 0 }, watchdog: { timeS: 0, distanceM: 0 },
      "singularity-guard": { timeS: 0, distanceM: 0 }, "instant-halt": { timeS: 0, distanceM: 0 },
    },
    jointAccelPeak: [0, 0],
  });

  it("keeps the last window of frames in time order across the ring's wrap, in chart units", () => {
    const trace = new FrameTrace(8);
    trace.reset(["revolute", "prismatic"]);
    for (let i = 0; i < 12; i++) trace.push(frame(i * 0.5));
    const data = trace.chartData(2);
    // Newest t = 5.5 s; a 2 s window keeps 3.5 … 5.5 s.
    expect(Array.from(data.speed[0])).toEqual([3.5, 4, 4.5, 5, 5.5]);
    expect(data.jointRates[1]![0]).toBeCloseTo(180, 9); // π rad/s → 180 deg/s
    expect(data.speed[1]![0]).toBeCloseTo(500, 9); // |(0.3, 0.4, 0)| m/s → 500 mm/s
    expect(data.sigma[1]![0]).toBeCloseTo(50, 9); // 0.05 m → 50 mm
  });
});
