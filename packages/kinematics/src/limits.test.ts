import { describe, expect, it } from "vitest";
import {
  accelScaleInto, brakingSpeed, capScale, dampedLeastSquares, geometricJacobian, jointLimitScale, scaleToCaps,
} from "./index.ts";
import { stoppingHorizonInto, stopsBeforeStandOffs } from "./limits.ts";
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

/** Plain reading of jointLimitScale's documented rule, with none of its shortcuts (for the pinning test). */
function jointLimitScalePlain(
  q: number[], qdot: number[], min: number[], max: number[], caps: number[], margins: number[], zones: number[], dt: number,
  accels: number[] | null,
): number {
  let s = 1;
  for (let i = 0; i < q.length; i++) {
    const v = qdot[i]!;
    if (v === 0) continue;
    const gap = v > 0 ? max[i]! - margins[i]! - q[i]! : q[i]! - (min[i]! + margins[i]!);
    if (gap === Infinity) continue;
    const speed = Math.abs(v);
    let allowed = 0;
    if (gap > 0) {
      const ramp = zones[i]! > 0 ? Math.min(1, gap / zones[i]!) : 1;
      const capRamp = caps[i] === Infinity ? speed * ramp : caps[i]! * ramp;
      const a = accels ? accels[i]! : Infinity;
      allowed = Math.min(capRamp, a === Infinity || !(a > 0) ? gap / dt : brakingSpeed(gap, a, dt));
    }
    if (speed * s > allowed) s = allowed / speed;
  }
  return s;
}

describe("jointLimitScale and capScale, pinned to their plain rules", () => {
  it("equal the plain formulas for thousands of random inputs with NaN, 0 and Infinity among them", () => {
    // Pinning test (issue 8): jointLimitScale skips work where it provably cannot bind (limits.ts); the
    // result must be the plain rule's, bit for bit. capScale: s = min(1, min_i cap_i/|v_i|), NaN → 0.
    const next = rng(53);
    const special = [0, -0, NaN, Infinity, -Infinity, 1e-300, 1e300];
    const pick = (x: number) => (next() < 0.08 ? special[Math.floor(next() * special.length)]! : x);
    for (let trial = 0; trial < 5000; trial++) {
      const n = 1 + Math.floor(next() * 7);
      const min = Array.from({ length: n }, () => (next() < 0.1 ? -Infinity : -1 - next()));
      const max = Array.from({ length: n }, () => (next() < 0.1 ? Infinity : 1 + next()));
      const q = Array.from({ length: n }, (_, i) => pick(Math.max(min[i]!, -2) + (Math.min(max[i]!, 2) - Math.max(min[i]!, -2)) * next()));
      const qdot = Array.from({ length: n }, () => pick(50 * (2 * next() - 1)));
      const caps = Array.from({ length: n }, () => (next() < 0.2 ? Infinity : pick(5 * next())));
      const margins = Array.from({ length: n }, () => (next() < 0.3 ? 0 : 0.1 * next()));
      const zones = Array.from({ length: n }, () => (next() < 0.3 ? 0 : 0.4 * next()));
      const dt = 1e-4 + 0.01 * next();
      const accels = next() < 0.5 ? null : Array.from({ length: n }, () => (next() < 0.2 ? Infinity : pick(1 + 100 * next())));
      const got = jointLimitScale(q, qdot, min, max, caps, n, margins, zones, dt, null, accels);
      expect(Object.is(got, jointLimitScalePlain(q, qdot, min, max, caps, margins, zones, dt, accels))).toBe(true);
      const c = capScale(qdot, caps, n);
      let expected = 1;
      for (let i = 0; i < n; i++) {
        const v = Math.abs(qdot[i]!);
        if (Number.isNaN(v)) { expected = 0; break; }
        if (v * expected > caps[i]!) expected = caps[i]! / v;
      }
      expect(Object.is(c, expected)).toBe(true);
    }
  });
});

describe("brakingSpeed", () => {
  /** Distance covered braking from v at a per step of dt, each step moving by the new speed·dt (derived). */
  function brakingDistance(v: number, a: number, dt: number): number {
    let d = 0;
    for (let speed = v; speed > 0; speed -= a * dt) d += speed * dt;
    return d;
  }

  it("is the fastest speed from which braking within the acceleration limit stops before the gap", () => {
    // Derived (limits.ts): S(v)·dt ≤ gap exactly at the returned speed; 1e-9 faster overshoots (for speeds
    // that need more than one step to stop). Brute-force braking sums are the oracle.
    const next = rng(54);
    for (let trial = 0; trial < 2000; trial++) {
      const a = 0.5 + 50 * next(), dt = 1e-4 + 0.008 * next(), gap = 1e-5 + 0.5 * next();
      const v = brakingSpeed(gap, a, dt);
      expect(brakingDistance(v, a, dt)).toBeLessThanOrEqual(gap * (1 + 1e-12));
      if (v > 2 * a * dt) expect(brakingDistance(v * (1 + 1e-9), a, dt)).toBeGreaterThan(gap * (1 - 1e-12));
      expect(v).toBeLessThanOrEqual(gap / dt);
    }
  });

  it("tends to sqrt(2·a·gap) for small steps, gives gap/dt without a limit and 0 at the stand-off", () => {
    // v²/2a stopping distance (common practice, no source); the one-step rule of jointLimitScale (derived).
    expect(brakingSpeed(0.1, 2, 1e-6)).toBeCloseTo(Math.sqrt(2 * 2 * 0.1), 4);
    expect(brakingSpeed(0.1, Infinity, 0.002)).toBe(0.1 / 0.002);
    expect(brakingSpeed(0, 2, 0.002)).toBe(0);
    expect(brakingSpeed(-1, 2, 0.002)).toBe(0);
    expect(brakingSpeed(Infinity, 2, 0.002)).toBe(Infinity);
  });
});

describe("accelScaleInto and the stopping horizon", () => {
  it("limits the change by one factor f = min(1, min_i a_i·dt/|Δ_i|), with NaN giving 0", () => {
    // PRODUCT.md step 6 (definition), checked directly.
    const box = new Float64Array(1), bind = new Int32Array(1);
    box[0] = 0.01;
    accelScaleInto([0, 0, 0], [1, -4, 0.5], [10, 100, 1], 3, box, bind);
    expect(box[0]).toBeCloseTo(0.02, 15); // joint 2: 1·0.01/0.5
    expect(bind[0]).toBe(2);
    box[0] = 0.01;
    accelScaleInto([0, 0], [1, NaN], [10, 10], 2, box, bind);
    expect(box[0]).toBe(0);
    box[0] = 0.01;
    accelScaleInto([0, 0], [1, 5], [Infinity, Infinity], 2, box, bind);
    expect(box[0]).toBe(1);
    expect(bind[0]).toBe(-1);
  });

  it("gives the distance of a stop by one factor, matching a simulated stop, and says when it would pass a stand-off", () => {
    // Derived (limits.ts stoppingHorizonInto); oracle: braking with accelScaleInto toward zero, summed.
    const next = rng(55);
    const box = new Float64Array(1);
    for (let trial = 0; trial < 500; trial++) {
      const n = 1 + Math.floor(next() * 6);
      const rates = Array.from({ length: n }, () => 4 * (2 * next() - 1));
      const accels = Array.from({ length: n }, () => (next() < 0.1 ? Infinity : 0.5 + 20 * next()));
      const dt = 0.001 + 0.004 * next();
      box[0] = dt;
      stoppingHorizonInto(rates, accels, n, box);
      const H = box[0]!;
      const r = Float64Array.from(rates);
      const travel = rates.map((v) => v * dt);
      for (let k = 0; k < 100000 && r.some((v) => v !== 0); k++) {
        box[0] = dt;
        accelScaleInto(r, new Float64Array(n), accels, n, box, null);
        const f = box[0]!;
        for (let i = 0; i < n; i++) { r[i] = r[i]! - f * r[i]!; travel[i] = travel[i]! + r[i]! * dt; }
        if (f === 1) break;
      }
      rates.forEach((v, i) => expect(travel[i]!).toBeCloseTo(v * H, 9));
    }
    // Joint 0 at 0.5 rad toward a limit at 1 (gap 0.5) at 1 rad/s; joint 1 toward −1 from 0 (gap 1).
    box[0] = 0.49;
    expect(stopsBeforeStandOffs([0.5, 0], [1, -1], [-1, -1], [1, 1], [0, 0], 2, box, null)).toBe(true);
    box[0] = 0.5; // exactly at the stand-off: refused (1e-12 rounding margin)
    const bind = new Int32Array(1);
    expect(stopsBeforeStandOffs([0.5, 0], [1, -1], [-1, -1], [1, 1], [0, 0], 2, box, bind)).toBe(false);
    expect(bind[0]).toBe(0);
  });
});
