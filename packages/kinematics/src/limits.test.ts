import { describe, expect, it } from "vitest";
import { dampedLeastSquares, geometricJacobian, jointLimitScale, scaleToCaps } from "./index.ts";
import { arm6, matVec, norm, qB, rng } from "./test-fixtures.ts";

const DEG = Math.PI / 180;
const twistB = [0.02, -0.01, 0.03, 0.1, 0, 0.05];
const capsB = [150, 150, 180, 300, 300, 400].map((c) => c * DEG);

/** Angle between two vectors, atan2(|a⊥b|, a·b̂) (accurate near 0, unlike acos). */
function angleBetween(a: number[], b: number[]): number {
  const nb = norm(b);
  const along = a.reduce((s, v, i) => s + (v * b[i]!) / nb, 0);
  const perp = norm(a.map((v, i) => v - (along * b[i]!) / nb));
  return Math.atan2(perp, along);
}

describe("scaleToCaps", () => {
  it("uses one factor s = min(1, min_i cap_i/|qdot_i|) and brings every joint under its cap", () => {
    // PRODUCT.md "The control step" step 6 (definition), checked directly.
    const next = rng(51);
    for (let trial = 0; trial < 100; trial++) {
      const qdot = [0, 1, 2, 3, 4, 5].map(() => 10 * (2 * next() - 1));
      const caps = qdot.map(() => 5 * next());
      const { qdot: out, scale } = scaleToCaps(qdot, caps);
      const expected = Math.min(1, ...qdot.map((v, i) => caps[i]! / Math.abs(v)));
      expect(scale).toBeCloseTo(expected, 15);
      out.forEach((v, i) => {
        expect(Math.abs(v)).toBeLessThanOrEqual(caps[i]! * (1 + 1e-15));
        expect(v).toBeCloseTo(scale * qdot[i]!, 15);
      });
    }
    expect(scaleToCaps([0.1, -0.2], [1, 1]).scale).toBe(1);
  });

  it("keeps J·qdot parallel to the commanded twist, while per-joint clipping turns the tool off its path", () => {
    // Derived (J is linear: J(s·qdot) = s·J·qdot). Secondary, METHODS.md §6 [CALC]: s = 0.6502743 and a
    // 106.5° error for clipping at ARM-6 q_B with the exact inverse.
    const J = geometricJacobian(arm6, qB);
    const qdot = dampedLeastSquares(J, 6, 6, twistB, 0);
    const { qdot: scaled, scale } = scaleToCaps(qdot, capsB);
    const achieved = matVec(J, 6, 6, scaled);
    expect(angleBetween(achieved, twistB)).toBeLessThan(1e-9);
    expect(norm(achieved)).toBeCloseTo(scale * norm(twistB), 12);
    const clipped = Array.from(qdot, (v, i) => Math.max(-capsB[i]!, Math.min(capsB[i]!, v)));
    const clippedTwist = matVec(J, 6, 6, clipped);
    expect(angleBetween(clippedTwist, twistB)).toBeGreaterThan(0.5);
    expect(scale).toBeCloseTo(0.6502743, 7);
    expect(angleBetween(clippedTwist, twistB) / DEG).toBeCloseTo(106.5, 1);
  });
});

describe("jointLimitScale", () => {
  const min = [-1, -1], max = [1, 1], caps = [2, 2], margins = [0.05, 0.05], zones = [0.2, 0.2];

  it("does not slow joints far from their limits or moving away from them", () => {
    // Our slow-down rule (common practice, no source).
    expect(jointLimitScale([0, 0], [1, -1], min, max, caps, 2, margins, zones, 0.001)).toBe(1);
    expect(jointLimitScale([0.94, -0.94], [-1, 1], min, max, caps, 2, margins, zones, 0.001)).toBe(1);
  });

  it("ramps the allowed speed linearly through the zone and stops at the stand-off", () => {
    // Our slow-down rule: allowed = cap·gap/zone (common practice, no source).
    const s = jointLimitScale([0.85, 0], [2, 0], min, max, caps, 2, margins, zones, 0.001);
    expect(s).toBeCloseTo(0.5, 12); // gap 0.1 of a 0.2 zone
    expect(jointLimitScale([0.95, 0], [2, 0], min, max, caps, 2, margins, zones, 0.001)).toBe(0);
  });

  it("never lets one Euler step pass limit − margin, even with no slow-down zone", () => {
    // Derived: the allowed speed is at most gap/dt.
    const next = rng(52);
    for (let trial = 0; trial < 1000; trial++) {
      const q = [2 * next() - 1, 2 * next() - 1];
      const qdot = [50 * (2 * next() - 1), 50 * (2 * next() - 1)];
      const dt = 0.01 * next() + 1e-4;
      const s = jointLimitScale(q, qdot, min, max, [Infinity, Infinity], 2, margins, [0, 0], dt);
      for (let i = 0; i < 2; i++) {
        const q1 = q[i]! + s * qdot[i]! * dt;
        if (qdot[i]! > 0 && q[i]! <= max[i]! - margins[i]!) expect(q1).toBeLessThanOrEqual(max[i]! - margins[i]! + 1e-15);
        if (qdot[i]! < 0 && q[i]! >= min[i]! + margins[i]!) expect(q1).toBeGreaterThanOrEqual(min[i]! + margins[i]! - 1e-15);
      }
    }
  });
});
