import { describe, expect, it } from "vitest";
import { FrameTrace } from "../../../lib/frame-trace.ts";
import { shapeAxis } from "@jogwright/kinematics";
import { frameAtRest } from "@jogwright/shared/test-support";

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
  // Two joints, the second prismatic; what the trace reads: t, qdot, σ_min, λ and the twists.
  const frame = (t: number) => frameAtRest({ t, q: [0, 0], qdot: [Math.PI, 0], twistCommanded: [0.3, 0.4, 0, 0, 0, 0], sigmaMin: 0.05, lambda: 0.01 });

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
