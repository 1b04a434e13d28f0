import { describe, expect, it } from "vitest";
import { applyDeadband, applyExpo, shapeAxis, slewUniform, slewVector3, unshapeAxis } from "./shaping.ts";

describe("input shaping", () => {
  it("the deadband with rescaling gives the METHODS.md §8 check values (d = 0.1)", () => {
    // METHODS.md §8 [CALC]: 0.05 → 0, 0.10 → 0, 0.55 → 0.500, 1.0 → 1.0 (common practice, no source).
    expect(applyDeadband(0.05, 0.1)).toBe(0);
    expect(applyDeadband(0.1, 0.1)).toBe(0);
    expect(applyDeadband(0.55, 0.1)).toBeCloseTo(0.5, 12);
    expect(applyDeadband(1, 0.1)).toBeCloseTo(1, 12);
    expect(applyDeadband(-0.55, 0.1)).toBeCloseTo(-0.5, 12);
  });

  it("the expo curve keeps ±1 and 0 and bends the middle: e = 0.5, x = 0.5 → 0.3125", () => {
    // (1 − e)·x + e·x³ = 0.25 + 0.0625 (derived).
    expect(applyExpo(0.5, 0.5)).toBeCloseTo(0.3125, 12);
    expect(applyExpo(1, 0.7)).toBeCloseTo(1, 12);
    expect(applyExpo(-1, 0.7)).toBeCloseTo(-1, 12);
    expect(shapeAxis(0, 0.1, 0.3)).toBe(0);
    // Deadband then expo: x = 0.5, e = 0.3, no deadband → 0.35 + 0.0375 = 0.3875 (derived; the console's
    // device calibration check value, now the same function).
    expect(shapeAxis(0.5, 0, 0.3)).toBeCloseTo(0.3875, 12);
  });

  it("unshapeAxis inverts deadband and expo: shapeAxis(unshapeAxis(y)) = y, and the check values", () => {
    // Check values, derived by hand: e = 0.5, no deadband: applyExpo(0.5) = 0.3125, so 0.3125 → 0.5; with
    // d = 0.1 the deflection is 0.1 + 0.5·0.9 = 0.55 (the METHODS.md §8 deadband check value read backwards).
    expect(unshapeAxis(0.3125, 0, 0.5)).toBeCloseTo(0.5, 14);
    expect(unshapeAxis(0.3125, 0.1, 0.5)).toBeCloseTo(0.55, 14);
    expect(unshapeAxis(-0.3125, 0.1, 0.5)).toBeCloseTo(-0.55, 14);
    expect(unshapeAxis(0, 0.1, 0.3)).toBe(0);
    expect(unshapeAxis(Number.NaN, 0.1, 0.3)).toBe(0);
    expect(unshapeAxis(2, 0.1, 0.3)).toBeCloseTo(1, 14);
    for (const [d, e] of [[0, 0], [0.1, 0.3], [0.25, 1], [0.05, 0.9]] as const) {
      for (let k = -100; k <= 100; k++) {
        const y = k / 100;
        expect(Math.abs(shapeAxis(unshapeAxis(y, d, e), d, e) - y)).toBeLessThan(1e-14);
      }
    }
  });

  it("a value outside −1 … 1 or NaN never widens the command", () => {
    expect(shapeAxis(1.7, 0.1, 0.3)).toBe(1);
    expect(shapeAxis(-3, 0, 0)).toBe(-1);
    expect(shapeAxis(Number.NaN, 0.1, 0.3)).toBe(0);
  });

  it("the slew limit moves a vector by at most the step, keeping the direction of the change", () => {
    const cur = new Float64Array([0, 0, 0]);
    const target = new Float64Array([3, 4, 0]);
    slewVector3(cur, target, 0, 1); // |Δ| = 5 → one unit along (0.6, 0.8) (derived)
    expect(cur[0]).toBeCloseTo(0.6, 12);
    expect(cur[1]).toBeCloseTo(0.8, 12);
    for (let i = 0; i < 10; i++) slewVector3(cur, target, 0, 1);
    expect([...cur]).toEqual([3, 4, 0]);
  });

  it("the uniform slew limit scales the whole change by one factor so no element exceeds its own step", () => {
    // Δ = (2, −1, 4), steps (1, 1, Infinity): f = min(1/2, 1/1) = 0.5 → (1, −0.5, 2) (derived).
    const cur = new Float64Array([0, 0, 0]);
    const f = slewUniform(cur, [2, -1, 4], 3, [1, 1, Infinity]);
    expect(f).toBe(0.5);
    expect([...cur]).toEqual([1, -0.5, 2]);
    expect(slewUniform(cur, [2, -1, 4], 3, [1, 1, Infinity])).toBe(1);
    expect([...cur]).toEqual([2, -1, 4]);
  });
});
