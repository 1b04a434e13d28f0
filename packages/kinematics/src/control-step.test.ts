import { Matrix, SingularValueDecomposition } from "ml-matrix";
import { describe, expect, it } from "vitest";
import {
  KinematicsInputError, accelScaleInto, capScale, controlStep, createControlReport, createControlState, createControlWorkspace,
  dampedLeastSquares, dampedLeastSquaresInto, dampingFor, defaultControlParams, demoArms, forwardPose,
  geometricJacobian, jointJogStep, jointLimitScale, ratedJointAccel, singularValues, validateControlParams,
} from "./index.ts";
import type { ControlParams, ControlState, ControlStepReport, DemoArm } from "./index.ts";
import { matVec, maxAbsDiff, norm, rng } from "./test-fixtures.ts";

const DEG = Math.PI / 180;

const arm6 = demoArms.find((a) => a.slug === "cell-arm-6")!;
const arm7 = demoArms.find((a) => a.slug === "cell-arm-7")!;

function setup(demo: DemoArm, q0: number[] = demo.readyPose) {
  return {
    ws: createControlWorkspace(demo.model),
    state: createControlState(demo.model, q0),
    report: createControlReport(),
  };
}

function params(over: Partial<ControlParams> = {}): ControlParams {
  return { ...defaultControlParams(), ...over };
}

function isParallel(a: ArrayLike<number>, b: ArrayLike<number>, tol: number): boolean {
  const nb = norm(b);
  let along = 0;
  for (let i = 0; i < b.length; i++) along += (a[i]! * b[i]!) / nb;
  const perp = norm(Array.from(a, (v, i) => v - (along * b[i]!) / nb));
  return along > 0 && perp <= tol * norm(a);
}

describe("controlStep", () => {
  it("makes no motion at all for a zero twist (no enabling control held)", () => {
    // Derived: DLS of a zero twist is zero; with drift correction off nothing else moves the arm.
    const { ws, state, report } = setup(arm6);
    const q0 = Array.from(state.q);
    for (let i = 0; i < 1000; i++) controlStep(ws, state, params(), [0, 0, 0, 0, 0, 0], 0.001, report);
    expect(Array.from(state.q)).toEqual(q0);
    expect(Array.from(state.qdot)).toEqual([0, 0, 0, 0, 0, 0]);
    expect(report.fault).toBe("none");
    expect(report.binding).toBe("none");
  });

  it("achieves the commanded twist away from singularities and keeps its direction when caps bind", () => {
    // Derived: with λ = 0 J·qdot = twist; uniform scaling keeps J·qdot parallel (PRODUCT.md step 6).
    const { ws, state, report } = setup(arm6);
    const p = params({ damping: { kind: "fixed", lambda: 0 }, tcpLinearCap: Infinity, tcpAngularCap: Infinity });
    controlStep(ws, state, p, [0.05, -0.02, 0.03, 0.1, 0, -0.1], 0.001, report);
    expect(maxAbsDiff(report.achievedTwist, [0.05, -0.02, 0.03, 0.1, 0, -0.1])).toBeLessThan(1e-9);
    const big = [2, -1, 1.5, 3, 0, -2];
    controlStep(ws, state, p, big, 0.001, report);
    expect(report.binding).toBe("joint-rate");
    expect(report.scale).toBeLessThan(1);
    expect(isParallel(report.achievedTwist, big, 1e-9)).toBe(true);
    state.qdot.forEach((v, i) => expect(Math.abs(v)).toBeLessThanOrEqual(arm6.model.joints[i]!.maxSpeed! * (1 + 1e-12)));
  });

  it("caps the TCP linear and angular speed and names the binding limit", () => {
    // ISO 10218-1:2011 reduced speed 250 mm/s as the linear cap (PRODUCT.md); check derived.
    const { ws, state, report } = setup(arm6);
    controlStep(ws, state, params({ tcpLinearCap: 0.25 }), [0.4, 0, 0, 0, 0, 0], 0.001, report);
    expect(report.tcpLinearSpeed).toBeCloseTo(0.25, 9);
    expect(report.binding).toBe("tcp-linear");
    controlStep(ws, state, params({ tcpAngularCap: 0.5 }), [0, 0, 0, 0, 0, 1], 0.001, report);
    expect(report.tcpAngularSpeed).toBeCloseTo(0.5, 9);
    expect(report.binding).toBe("tcp-angular");
  });

  it("never crosses a joint limit in a long random jog, and never produces a non-finite state", () => {
    // Derived (limits.ts: allowed speed ≤ gap/dt). Random twists of up to 0.6 m/s and 3 rad/s, through
    // singular regions (damp-through), for both demo arms, with and without a stand-off margin.
    for (const demo of [arm6, arm7]) {
      for (const margin of [0, 0.05]) {
        const { ws, state, report } = setup(demo);
        const p = params({ jointLimitMargin: margin, jointLimitSlowZone: margin * 2, tcpLinearCap: Infinity, tcpAngularCap: Infinity });
        const next = rng(margin === 0 ? 61 : 62);
        const tw = [0, 0, 0, 0, 0, 0];
        let boundByLimit = 0;
        for (let s = 0; s < 10000; s++) {
          if (s % 300 === 0) for (let i = 0; i < 6; i++) tw[i] = (i < 3 ? 0.6 : 3) * (2 * next() - 1);
          controlStep(ws, state, p, tw, 0.004, report);
          if (report.binding === "joint-limit") boundByLimit++;
          if (report.fault !== "none") throw new Error(`fault ${report.fault} at step ${s}`);
          for (let i = 0; i < state.n; i++) {
            const j = demo.model.joints[i]!;
            const q = state.q[i]!;
            if (!Number.isFinite(q) || q > j.max! - margin || q < j.min! + margin) {
              throw new Error(`joint ${i} at ${q} passed its limit (margin ${margin}) at step ${s}`);
            }
          }
        }
        expect(boundByLimit).toBeGreaterThan(0); // the jog really did run into limits
      }
    }
  }, 60_000);

  it("rejects a NaN twist or a bad dt by zeroing qdot and reporting it, leaving q unchanged", () => {
    // Our contract: no throwing inside the loop, never a NaN state (STYLE.md; common practice).
    const { ws, state, report } = setup(arm6);
    controlStep(ws, state, params(), [0.1, 0, 0, 0, 0, 0], 0.001, report);
    const q = Array.from(state.q);
    controlStep(ws, state, params(), [NaN, 0, 0, 0, 0, 0], 0.001, report);
    expect(report.fault).toBe("invalid-command");
    expect(report.isDegenerate).toBe(true);
    expect(Array.from(state.qdot)).toEqual([0, 0, 0, 0, 0, 0]);
    expect(Array.from(state.q)).toEqual(q);
    controlStep(ws, state, params(), [0, 0, 0], 0.001, report);
    expect(report.fault).toBe("invalid-command");
    for (const dt of [0, -0.001, NaN, Infinity]) {
      controlStep(ws, state, params(), [0.1, 0, 0, 0, 0, 0], dt, report);
      expect(report.fault).toBe("invalid-dt");
    }
    jointJogStep(ws, state, params(), [0, 0, Infinity, 0, 0, 0], 0.001, report);
    expect(report.fault).toBe("invalid-command");
    expect(Array.from(state.q)).toEqual(q);
  });

  it("reports a singular solve instead of NaN when λ = 0 at an exact singularity", () => {
    // Derived: J Jᵀ is singular at the all-zero pose (PRODUCT.md: joint 5 = 0).
    const { ws, state, report } = setup(arm6, [0, 0, 0, 0, 0, 0]);
    controlStep(ws, state, params({ damping: { kind: "fixed", lambda: 0 } }), [0, 0, 0, 0.1, 0, 0], 0.001, report);
    expect(report.fault).toBe("singular-solve");
    expect(Array.from(state.q)).toEqual([0, 0, 0, 0, 0, 0]);
    // The singular-value schedule damps through it: finite, bounded rates.
    controlStep(ws, state, params(), [0, 0, 0, 0.1, 0, 0], 0.001, report);
    expect(report.fault).toBe("none");
    expect(report.lambda).toBeCloseTo(0.04, 6);
    expect(norm(state.qdot)).toBeLessThanOrEqual(norm([0, 0, 0, 0.1, 0, 0]) / (2 * report.lambda) + 1e-12);
  });

  it("stops before the singular region until acknowledged, and lets the operator back out", () => {
    // ISO 10218-1:2011 singularity rule (clause and wording from memory, not verified; the 2011 edition was
    // replaced in February 2025), PRODUCT.md step 7; behaviour of our guard design.
    const start = [0, -20, 30, 0, 25, 0].map((d) => (d * Math.PI) / 180);
    const { ws, state, report } = setup(arm6, start);
    const J = geometricJacobian(arm6.model, start);
    const sigma0 = singularValues(J, 6, 6)[5]!;
    const sigmaStop = sigma0 / 3;
    // The twist that joint 5 alone would make when turning toward 0: it drives the arm into the wrist singularity.
    const toward = matVec(J, 6, 6, [0, 0, 0, 0, -1, 0]).map((v) => v * 0.5);
    const p = params({ guard: { policy: "stop-before", sigmaStop, releaseFactor: 1.2 } });
    let stoppedAt = -1;
    for (let s = 0; s < 3000; s++) {
      controlStep(ws, state, p, toward, 0.002, report);
      expect(report.sigmaMin).toBeGreaterThanOrEqual(sigmaStop * (1 - 1e-3));
      if (report.binding === "singularity-guard") { stoppedAt = s; break; }
    }
    expect(stoppedAt).toBeGreaterThan(0);
    expect(state.guardState).toBe("stopped");
    const held = Array.from(state.q);
    controlStep(ws, state, p, toward, 0.002, report);
    expect(Array.from(state.q)).toEqual(held);
    // Backing out is allowed.
    controlStep(ws, state, p, toward.map((v) => -v), 0.002, report);
    expect(report.scale).toBeGreaterThan(0);
    expect(report.binding).not.toBe("singularity-guard");
    // After acknowledgement the arm damps through the singular region; once σ_min is back above
    // releaseFactor·sigmaStop on the far side the acknowledgement lapses, so the next approach stops again.
    state.singularityAcknowledged = true;
    let minSigma = Infinity;
    for (let s = 0; s < 600; s++) {
      controlStep(ws, state, p, toward, 0.002, report);
      minSigma = Math.min(minSigma, report.sigmaMin);
      expect(report.binding).not.toBe("singularity-guard");
      if (report.sigmaMin < sigmaStop) expect(report.guardState).toBe("acknowledged");
    }
    expect(minSigma).toBeLessThan(sigmaStop);
    expect(state.singularityAcknowledged).toBe(false);
  });

  it("with drift correction follows a straight line far more closely than open-loop Euler", () => {
    // Open-loop Euler drifts O(dt) (Whitney 1969 for the method, drift derived; METHODS.md §6); the
    // closed-loop correction K·e with 0 < K·dt ≤ 1 (Siciliano et al. 2009 sect. 3.7, from memory) removes it.
    const v = [0.1, 0.05, -0.05, 0, 0, 0];
    const dt = 0.004;
    const finalError = (drift: ControlParams["driftCorrection"]) => {
      const { ws, state, report } = setup(arm6);
      const p = params({ damping: { kind: "fixed", lambda: 0 }, driftCorrection: drift, tcpLinearCap: Infinity });
      const T0 = forwardPose(arm6.model, state.q);
      for (let s = 0; s < 250; s++) controlStep(ws, state, p, v, dt, report);
      const T = forwardPose(arm6.model, state.q);
      return norm([T[3]! - T0[3]! - v[0]!, T[7]! - T0[7]! - v[1]!, T[11]! - T0[11]! - v[2]!]);
    };
    const open = finalError(null);
    const closed = finalError({ gain: 0.5 / dt, maxPositionError: 0.01, maxOrientationError: 0.1 });
    expect(open).toBeGreaterThan(1e-5);
    expect(closed).toBeLessThan(open / 20);
  });

  it("faults instead of integrating when the drift gain is far above K·dt ≤ 1 (K·dt = 2.4)", () => {
    // Derived: the Euler error contracts by (1 − K·dt) per step; above 1 it overshoots, above 2 it diverges
    // (METHODS.md §6 gives 0 < K·dt < 2 for stability; we require no overshoot, K·dt ≤ 1).
    const { ws, state, report } = setup(arm6);
    controlStep(ws, state, params({ driftCorrection: { gain: 600, maxPositionError: 1, maxOrientationError: 1 } }), [0.1, 0, 0, 0, 0, 0], 0.004, report);
    expect(report.fault).toBe("unstable-drift-gain");
    expect(Array.from(state.qdot)).toEqual([0, 0, 0, 0, 0, 0]);
  });

  it("rotates a tool-frame twist into the world frame", () => {
    // Derived: v_w = R·v_t.
    const { ws, state, report } = setup(arm6);
    const T = forwardPose(arm6.model, state.q);
    controlStep(ws, state, params({ twistFrame: "tool", damping: { kind: "fixed", lambda: 0 } }), [0, 0, 0.05, 0, 0, 0], 0.001, report);
    expect(maxAbsDiff(report.commandedTwist, [0.05 * T[2]!, 0.05 * T[6]!, 0.05 * T[10]!, 0, 0, 0])).toBeLessThan(1e-15);
    expect(maxAbsDiff(report.achievedTwist, report.commandedTwist)).toBeLessThan(1e-9);
  });

  it("drives the redundant seven-axis arm (6 x 7 Jacobian)", () => {
    // Derived: with λ = 0 the minimum-norm solution achieves the twist exactly.
    const { ws, state, report } = setup(arm7);
    const p = params({ damping: { kind: "fixed", lambda: 0 } });
    const tw = [0.03, 0.02, -0.01, 0.1, -0.05, 0.2];
    for (let s = 0; s < 100; s++) controlStep(ws, state, p, tw, 0.001, report);
    expect(report.fault).toBe("none");
    expect(maxAbsDiff(report.achievedTwist, tw)).toBeLessThan(1e-9);
  });

  it("reports the TCP pose where the step started and the joint positions it was evaluated at, bit for bit the forward kinematics", () => {
    // A recorder takes the pose after a step from the next step's report when poseJoints match (trials).
    for (const demo of [arm6, arm7]) {
      const { ws, state, report } = setup(demo);
      const p = params({ jointAccelLimits: demo.model.joints.map((j) => ratedJointAccel(j) * 0.5) });
      for (let s = 0; s < 200; s++) {
        const q0 = Array.from(state.q);
        const twist = [0.05 * Math.cos(s / 20), 0.04, -0.02, 0.1, 0, 0.2 * Math.sin(s / 30)];
        if (s % 50 === 49) jointJogStep(ws, state, p, demo.model.joints.map(() => 0.1), 0.002, report);
        else controlStep(ws, state, p, twist, 0.002, report);
        expect(report.fault).toBe("none");
        expect(Array.from(report.poseJoints.subarray(0, state.n))).toEqual(q0);
        expect(Array.from(report.pose)).toEqual(Array.from(forwardPose(demo.model, q0)));
      }
      expect(Array.from(state.q)).not.toEqual(demo.readyPose);
    }
  });

  it("is deterministic: the same inputs give bit-identical states", () => {
    // Our contract (common practice, no source).
    const run = () => {
      const { ws, state, report } = setup(arm6);
      const next = rng(71);
      for (let s = 0; s < 2000; s++) controlStep(ws, state, params(), [0.2 * next() - 0.1, 0.1, 0, 0, 0.3 * next(), 0], 0.002, report);
      return Array.from(state.q);
    };
    expect(run()).toEqual(run());
  });
});

describe("jointJogStep", () => {
  it("checks the TCP speed with J_P·qdot, so a long reach cannot exceed the linear cap", () => {
    // METHODS.md §7 design note; ISO 10218-1:2011 250 mm/s reduced speed as the cap (PRODUCT.md).
    const { ws, state, report } = setup(arm6);
    jointJogStep(ws, state, params({ tcpLinearCap: 0.25 }), [1, 0, 0, 0, 0, 0], 0.001, report);
    expect(report.binding).toBe("tcp-linear");
    expect(report.tcpLinearSpeed).toBeCloseTo(0.25, 9);
    expect(state.qdot[0]).toBeLessThan(1);
    expect(state.qdot.slice(1).every((v) => v === 0)).toBe(true);
  });

  it("caps each joint at the smaller of the profile cap and the arm's maximum speed", () => {
    // Our contract; derived check.
    const { ws, state, report } = setup(arm6);
    jointJogStep(ws, state, params({ tcpLinearCap: Infinity, tcpAngularCap: Infinity, jointRateCaps: [0.5, 9, 9, 9, 9, 9] }), [0, 0, 0, 0, 0, 20], 0.001, report);
    expect(report.binding).toBe("joint-rate");
    expect(report.bindingJoint).toBe(5);
    expect(state.qdot[5]).toBeCloseTo(arm6.model.joints[5]!.maxSpeed!, 12);
  });
});

describe("validateControlParams", () => {
  it("accepts the defaults and names the field of a bad value", () => {
    // Our contract (common practice, no source).
    expect(() => validateControlParams(defaultControlParams(), 6)).not.toThrow();
    const bad = { ...defaultControlParams(), tcpLinearCap: -1 };
    expect(() => validateControlParams(bad, 6)).toThrow(KinematicsInputError);
    expect(() => validateControlParams({ ...defaultControlParams(), jointRateCaps: [1, 2] }, 6)).toThrow(/jointRateCaps/);
    expect(() => validateControlParams({ ...defaultControlParams(), damping: { kind: "singular-value", epsilon: NaN, lambdaMax: 0.1 } }, 6)).toThrow(/epsilon/);
  });

  it("has no acceleration limit and no null-space term by default, and checks both when given", () => {
    // Our contract (common practice, no source).
    const d = defaultControlParams();
    expect(d.jointAccelLimits).toBeNull();
    expect(d.nullSpace).toBeNull();
    expect(() => validateControlParams({ ...d, jointAccelLimits: [1, 2, 3, 4, 5, Infinity] }, 6)).not.toThrow();
    expect(() => validateControlParams({ ...d, jointAccelLimits: [1, 2, 3] }, 6)).toThrow(/jointAccelLimits/);
    expect(() => validateControlParams({ ...d, jointAccelLimits: [1, 2, 3, 4, 5, 0] }, 6)).toThrow(/jointAccelLimits\[5\]/);
    expect(() => validateControlParams({ ...d, jointAccelLimits: [1, 2, 3, 4, 5, NaN] }, 6)).toThrow(/jointAccelLimits\[5\]/);
    expect(() => validateControlParams({ ...d, nullSpace: { gain: 0.5 } }, 7)).not.toThrow();
    expect(() => validateControlParams({ ...d, nullSpace: { gain: -1 } }, 7)).toThrow(/nullSpace.gain/);
    expect(() => validateControlParams({ ...d, nullSpace: { gain: Infinity } }, 7)).toThrow(/nullSpace.gain/);
  });
});

// ---------------------------------------------------------------------------------------------------
// Issue 8: acceleration limits, drift correction that respects damping, filtering of every small
// direction, the null-space term, and the DLS gain bound.
// ---------------------------------------------------------------------------------------------------

/** Rated accelerations of a demo arm (arm.ts ratedJointAccel; demo-arms.ts gives them explicitly). */
function ratedAccels(demo: DemoArm, fraction = 1): number[] {
  return demo.model.joints.map((j) => ratedJointAccel(j) * fraction);
}

interface Run {
  state: ControlState;
  report: ControlStepReport;
  /** Peak |q̇_i| and |q̈_i| = |Δq̇_i|/dt per joint over the run (q̈ from successive applied qdot, from rest). */
  peakRate: number[];
  peakAccel: number[];
  /** Peak |q̈_i| after the first `skip` steps (excludes the start from rest). */
  peakAccelAfter: number[];
}

/** Runs `steps` Cartesian steps of a constant twist and records rates and accelerations. */
function runTwist(
  demo: DemoArm, q0: number[], p: ControlParams, twist: number[], dt: number, steps: number, skip = 0,
  each?: (s: number, state: ControlState, report: ControlStepReport) => void,
): Run {
  const { ws, state, report } = setup(demo, q0);
  const n = state.n;
  const prev = new Float64Array(n);
  const peakRate = new Array(n).fill(0), peakAccel = new Array(n).fill(0), peakAccelAfter = new Array(n).fill(0);
  for (let s = 0; s < steps; s++) {
    controlStep(ws, state, p, twist, dt, report);
    if (report.fault !== "none") throw new Error(`fault ${report.fault} at step ${s}`);
    for (let i = 0; i < n; i++) {
      const acc = Math.abs(state.qdot[i]! - prev[i]!) / dt;
      peakAccel[i] = Math.max(peakAccel[i], acc);
      if (s >= skip) peakAccelAfter[i] = Math.max(peakAccelAfter[i], acc);
      peakRate[i] = Math.max(peakRate[i], Math.abs(state.qdot[i]!));
      prev[i] = state.qdot[i]!;
    }
    each?.(s, state, report);
  }
  return { state, report, peakRate, peakAccel, peakAccelAfter };
}

/** Largest distance of the TCP from the straight line through p0 along unit d [m]. */
function lineDeviation(T: ArrayLike<number>, p0: number[], d: number[]): number {
  const e = [T[3]! - p0[0]!, T[7]! - p0[1]!, T[11]! - p0[2]!];
  const along = e[0]! * d[0]! + e[1]! * d[1]! + e[2]! * d[2]!;
  return norm([e[0]! - along * d[0]!, e[1]! - along * d[1]!, e[2]! - along * d[2]!]);
}

describe("controlStep with joint acceleration limits", () => {
  // The wrist pass: six-axis demo arm, 500 Hz, singular-value schedule ε = 0.04 with λmax = 0.005.
  const wristStart = [0, -20, 30, 40, 12, 0].map((d) => d * DEG);
  const wristTwist = [0, 0.1, -0.1, 0, 0, 0];
  const lowDamping = { kind: "singular-value" as const, epsilon: 0.04, lambdaMax: 0.005 };

  it("keeps every joint's |q̈| from successive qdot at or below its limit through the wrist, where the unlimited step needs thousands of °/s²", () => {
    // Issue 8 measurement (review, not a source): joints 4 and 6 reached 8,300 °/s² with λmax = 0.005.
    // Limits: the arm's rated accelerations (demo-arms.ts: 4 × rated speed per second; common practice,
    // no source). Check derived: |Δq̇_i| ≤ a_i·dt each step, up to rounding.
    const dt = 0.002, steps = 1500;
    const free = runTwist(arm6, wristStart, params({ damping: lowDamping }), wristTwist, dt, steps, 50);
    expect(free.peakAccelAfter[3]! / DEG).toBeGreaterThan(5000);
    expect(free.peakAccelAfter[5]! / DEG).toBeGreaterThan(5000);
    const limits = ratedAccels(arm6);
    const T0 = forwardPose(arm6.model, wristStart);
    const limited = runTwist(arm6, wristStart, params({ damping: lowDamping, jointAccelLimits: limits }), wristTwist, dt, steps, 0,
      (_s, state, report) => {
        expect(report.maxJointAccel).toBeLessThanOrEqual(Math.max(...limits) * (1 + 1e-9));
        expect(state.guardState).toBe("off");
      });
    limited.peakAccel.forEach((a, i) => expect(a).toBeLessThanOrEqual(limits[i]! * (1 + 1e-9)));
    // It still went through the wrist region and on along the commanded line (≥ 0.35 m of 0.42 m).
    const T = forwardPose(arm6.model, limited.state.q);
    const d = [0, Math.SQRT1_2, -Math.SQRT1_2];
    expect((T[7]! - T0[7]!) * d[1]! + (T[11]! - T0[11]!) * d[2]!).toBeGreaterThan(0.35);
  });

  it("changes qdot by one factor for the whole vector, so the change keeps its direction", () => {
    // PRODUCT.md step 6 (one factor for the qdot change); check derived: from rest, the first step's qdot
    // is f times the unlimited one, and the binding joint changes by exactly a·dt.
    const dt = 0.002;
    const tw = [0.1, -0.05, 0.08, 0.3, 0, -0.2];
    const free = setup(arm6);
    controlStep(free.ws, free.state, params(), tw, dt, free.report);
    const limits = ratedAccels(arm6, 0.5);
    const lim = setup(arm6);
    controlStep(lim.ws, lim.state, params({ jointAccelLimits: limits }), tw, dt, lim.report);
    const f = lim.report.accelScale;
    expect(f).toBeGreaterThan(0);
    expect(f).toBeLessThan(1);
    const j = lim.report.accelBindingJoint;
    expect(j).toBeGreaterThanOrEqual(0);
    expect(Math.abs(lim.state.qdot[j]!)).toBeCloseTo(limits[j]! * dt, 12);
    expect(maxAbsDiff(lim.state.qdot, Array.from(free.state.qdot, (v) => v * f))).toBeLessThan(1e-14);
    expect(isParallel(lim.report.achievedTwist, free.report.achievedTwist, 1e-12)).toBe(true);
  });

  it("never passes a joint limit's stand-off and stays within the acceleration limits in a long random jog of both arms", () => {
    // Derived: a candidate is applied only if braking the whole vector by one factor (the stopping horizon,
    // limits.ts) stops every joint before its stand-off, and braking stays in time one step later. Random
    // twists up to 0.6 m/s and 3 rad/s, through singular regions, limits at 100 % and 20 % of rated.
    for (const demo of [arm6, arm7]) {
      for (const [margin, fraction] of [[0, 1], [0.05, 0.2]] as const) {
        const { ws, state, report } = setup(demo);
        const limits = ratedAccels(demo, fraction);
        const p = params({
          jointLimitMargin: margin, jointLimitSlowZone: margin * 2, tcpLinearCap: Infinity, tcpAngularCap: Infinity,
          jointAccelLimits: limits,
        });
        const next = rng(fraction === 1 ? 81 : 82);
        const tw = [0, 0, 0, 0, 0, 0];
        const prev = new Float64Array(state.n);
        let boundByLimit = 0;
        for (let s = 0; s < 10000; s++) {
          if (s % 300 === 0) for (let i = 0; i < 6; i++) tw[i] = (i < 3 ? 0.6 : 3) * (2 * next() - 1);
          controlStep(ws, state, p, tw, 0.004, report);
          if (report.fault !== "none") throw new Error(`fault ${report.fault} at step ${s}`);
          if (report.binding === "joint-limit") boundByLimit++;
          for (let i = 0; i < state.n; i++) {
            const j = demo.model.joints[i]!;
            const q = state.q[i]!;
            if (q > j.max! - margin + 1e-12 || q < j.min! + margin - 1e-12) {
              throw new Error(`joint ${i} at ${q} passed its stand-off (margin ${margin}) at step ${s}`);
            }
            // 1e-6 relative: the last-resort floor (joint limit over acceleration) may add rounding.
            if (Math.abs(state.qdot[i]! - prev[i]!) > limits[i]! * 0.004 * (1 + 1e-6)) {
              throw new Error(`joint ${i} exceeded its acceleration limit at step ${s}`);
            }
            prev[i] = state.qdot[i]!;
          }
        }
        expect(boundByLimit).toBeGreaterThan(100); // the jog really did run into limits
      }
    }
  }, 60_000);

  it("makes the stop-before guard brake early enough to stop before σ_stop, although it can only decelerate", () => {
    // ISO 10218-1:2011 singularity rule, from memory (PRODUCT.md step 7; the 2011 edition was replaced in
    // 2025). Derived check: with 2 % of the rated accelerations the stop spans hundreds of steps, so a
    // one-step look-ahead would run far past σ_stop; the horizon look-ahead keeps σ_min ≥ σ_stop (to the
    // estimator's 5e-4 relative accuracy, sigma-estimate.ts) and checks it with the full SVD at rest.
    const start = [0, -20, 30, 0, 25, 0].map((d) => d * DEG);
    const J = geometricJacobian(arm6.model, start);
    const sigmaStop = singularValues(J, 6, 6)[5]! / 3;
    const toward = matVec(J, 6, 6, [0, 0, 0, 0, -2, 0]); // joint 5 toward 0 at 2 rad/s: into the wrist singularity
    const limits = ratedAccels(arm6, 0.02);
    const p = params({
      tcpLinearCap: Infinity, tcpAngularCap: Infinity, jointAccelLimits: limits,
      guard: { policy: "stop-before", sigmaStop, releaseFactor: 1.2 },
    });
    let firstStop = -1, atRest = -1;
    const run = runTwist(arm6, start, p, toward, 0.002, 2000, 0, (s, state, report) => {
      expect(report.sigmaMin).toBeGreaterThanOrEqual(sigmaStop * (1 - 1e-3));
      if (firstStop < 0 && report.binding === "singularity-guard") firstStop = s;
      if (firstStop >= 0 && atRest < 0 && state.qdot.every((v) => v === 0)) atRest = s;
    });
    expect(firstStop).toBeGreaterThan(0);
    expect(atRest - firstStop).toBeGreaterThan(100); // braking took many steps
    run.peakAccel.forEach((a, i) => expect(a).toBeLessThanOrEqual(limits[i]! * (1 + 1e-9)));
    expect(run.state.guardState).toBe("stopped");
    expect(singularValues(geometricJacobian(arm6.model, run.state.q), 6, 6)[5]!).toBeGreaterThanOrEqual(sigmaStop * (1 - 1e-3));
    // Backing out is still allowed (and ramps up within the limits).
    const ws = createControlWorkspace(arm6.model), report = createControlReport();
    controlStep(ws, run.state, p, toward.map((v) => -v), 0.002, report);
    expect(report.binding).not.toBe("singularity-guard");
    expect(report.maxJointAccel).toBeGreaterThan(0);
  });

  it("ramps a joint jog within the acceleration limits too", () => {
    // PRODUCT.md step 6 applies to every step; check derived.
    const { ws, state, report } = setup(arm6);
    const limits = ratedAccels(arm6);
    const p = params({ jointAccelLimits: limits, tcpLinearCap: Infinity, tcpAngularCap: Infinity });
    jointJogStep(ws, state, p, [0, 0, 0, 1, 0, 0], 0.002, report);
    expect(state.qdot[3]).toBeCloseTo(limits[3]! * 0.002, 12);
    expect(report.accelBindingJoint).toBe(3);
    for (let s = 0; s < 200; s++) jointJogStep(ws, state, p, [0, 0, 0, 1, 0, 0], 0.002, report);
    expect(state.qdot[3]).toBeCloseTo(1, 12);
    expect(report.accelScale).toBe(1);
  });
});

describe("controlStep drift correction near the wrist", () => {
  // The case: six-axis demo arm, 500 Hz, start (0, −20, 30, 40, 12, 0)°, world twist (0, 0.1, −0.1)
  // m/s for 3 s through wrist alignment, singular-value schedule ε = λmax = 0.04, re-anchor at 5 mm.
  const start = [0, -20, 30, 40, 12, 0].map((d) => d * DEG);
  const twist = [0, 0.1, -0.1, 0, 0, 0];
  const dt = 0.002, steps = 1500;
  const line = [0, Math.SQRT1_2, -Math.SQRT1_2];

  function measure(gain: number) {
    const drift = gain > 0 ? { gain, maxPositionError: 0.005, maxOrientationError: 0.05 } : null;
    const T0 = forwardPose(arm6.model, start);
    const p0 = [T0[3]!, T0[7]!, T0[11]!];
    let deviation = 0, maxError = 0, maxCorrection = 0, reanchors = 0;
    const run = runTwist(arm6, start, params({ driftCorrection: drift }), twist, dt, steps, 0, (_s, state, report) => {
      deviation = Math.max(deviation, lineDeviation(forwardPose(arm6.model, state.q), p0, line));
      maxError = Math.max(maxError, report.driftPositionError);
      maxCorrection = Math.max(maxCorrection, norm(report.correctionTwist));
      if (report.driftReset) reanchors++;
    });
    return { peakRate: Math.max(...run.peakRate), deviation, maxError, maxCorrection, reanchors };
  }

  it("never raises the peak joint rate and never lowers the accuracy, up to K = 250/s", () => {
    // Issue 8 measurements of the old rule (review, not a source): with K = 250/s the solved twist reached
    // 1305 mm/s, joint 4 rode its 150 °/s cap instead of 14.6 °/s, the deviation was 7.69 mm against 7.38 mm
    // open loop, and the 5 mm re-anchor made a sawtooth. Now the reference advances by the achieved twist
    // of the command, so what damping refuses never enters the error (derived).
    // Tolerances (derived): the peak rate is the open loop's to 1e-6; the deviation from the commanded line
    // is the open loop's to 1 %: both loops differ from the continuous-time damped path only by their O(dt)
    // integration error (open loop: Euler in joint space; corrected: the Euler sum of the achieved twist),
    // here 0.13 % and 0.6 % of it at 500 Hz — the correction removes the drift it can, not the deviation
    // that damping causes on purpose.
    const open = measure(0);
    expect(open.deviation).toBeGreaterThan(0.005); // damping really did take the TCP off the line near the wrist
    for (const gain of [50, 125, 250]) {
      const closed = measure(gain);
      expect(closed.peakRate).toBeLessThanOrEqual(open.peakRate * (1 + 1e-6));
      expect(closed.deviation).toBeLessThanOrEqual(open.deviation * 1.01);
      expect(closed.reanchors).toBe(0); // no wind-up, so no sawtooth
      expect(closed.maxError).toBeLessThan(1e-5); // the error stays at the integration drift (µm)
      expect(closed.maxCorrection).toBeLessThan(0.005); // m/s, against 1.3 m/s with the old rule
    }
  });

  it("refuses K·dt = 1.5 as an unstable drift gain and accepts K·dt = 1", () => {
    // Derived: with K·dt > 1 the discrete error e·(1 − K·dt) changes sign every step (issue 8 measured
    // 73,900 °/s² at K·dt = 1.5 with the old bound K·dt < 2).
    const { ws, state, report } = setup(arm6);
    const q0 = Array.from(state.q);
    controlStep(ws, state, params({ driftCorrection: { gain: 750, maxPositionError: 0.005, maxOrientationError: 0.05 } }), [0.1, 0, 0, 0, 0, 0], 0.002, report);
    expect(report.fault).toBe("unstable-drift-gain");
    expect(Array.from(state.q)).toEqual(q0);
    controlStep(ws, state, params({ driftCorrection: { gain: 500, maxPositionError: 0.005, maxOrientationError: 0.05 } }), [0.1, 0, 0, 0, 0, 0], 0.002, report);
    expect(report.fault).toBe("none");
  });

  it("removes an error it can act on, and holds the correction itself under the TCP caps", () => {
    // CLIK (Siciliano et al. 2009 sect. 3.7, from memory): the error shrinks by (1 − K·dt) per step away
    // from singularities (derived). The correction is capped like any TCP motion (PRODUCT.md step 8).
    const { ws, state, report } = setup(arm6);
    state.referencePose[3] = state.referencePose[3]! + 0.004; // 4 mm off, inside the 5 mm re-anchor distance
    const p = params({ driftCorrection: { gain: 500, maxPositionError: 0.005, maxOrientationError: 0.05 }, tcpLinearCap: 0.25 });
    controlStep(ws, state, p, [0, 0, 0, 0, 0, 0], 0.002, report);
    // K·e = 2 m/s, capped to 0.25 m/s.
    expect(norm(Array.from(report.correctionTwist).slice(0, 3))).toBeCloseTo(0.25, 12);
    expect(report.tcpLinearSpeed).toBeLessThanOrEqual(0.25 * (1 + 1e-12));
    for (let s = 0; s < 200; s++) controlStep(ws, state, p, [0, 0, 0, 0, 0, 0], 0.002, report);
    const T = forwardPose(arm6.model, state.q);
    expect(Math.abs(T[3]! - state.referencePose[3]!)).toBeLessThan(1e-6);
    expect(report.driftReset).toBe(false);
  });
});

/** Numerical filtering of every direction with σ < ε, from the SVD (ml-matrix, a reference library). */
function filteredBySvd(J: ArrayLike<number>, n: number, v: number[], eps: number, lambdaMax: number): number[] {
  const rows = Array.from({ length: 6 }, (_, r) => Array.from({ length: n }, (_, c) => J[r * n + c]!));
  const svd = new SingularValueDecomposition(new Matrix(rows));
  const U = svd.leftSingularVectors, V = svd.rightSingularVectors, S = svd.diagonal;
  const out = new Array(n).fill(0);
  for (let i = 0; i < S.length; i++) {
    const s = S[i]!;
    const l = s < eps ? dampingFor(s, { epsilon: eps, lambdaMax }) : 0;
    let uv = 0;
    for (let r = 0; r < 6; r++) uv += U.get(r, i) * v[r]!;
    for (let c = 0; c < n; c++) out[c] += (s / (s * s + l * l)) * uv * V.get(c, i);
  }
  return out;
}

describe("controlStep numerical filtering", () => {
  const noCaps = { tcpLinearCap: Infinity, tcpAngularCap: Infinity, jointLimitMargin: 0, jointLimitSlowZone: 0 };

  it("damps both small directions near a double singularity, so a 0.05 m/s twist needs about the joint rates of full DLS", () => {
    // Issue 8: at (0, −4.5, −84.5, 40, 30, 0)° σ5 = 0.011, σ6 = 0.0018, and filtering only the smallest
    // direction gave 184 °/s against 14 °/s with full DLS. σ here from our SVD (checked against ml-matrix
    // in svd.test.ts); the filtered solution Σ σ_i/(σ_i² + λ_i²)·v_i u_iᵀ·twist with λ_i = λ(σ_i) for
    // σ_i < ε is computed with ml-matrix's SVD (Maciejewski & Klein 1988 form, METHODS.md §2d).
    const q = [0, -4.5, -84.5, 40, 30, 0].map((d) => d * DEG);
    const J = geometricJacobian(arm6.model, q);
    const sigma = singularValues(J, 6, 6);
    expect(sigma[4]).toBeCloseTo(0.011, 3);
    expect(sigma[5]).toBeCloseTo(0.0018, 4);
    const twist = [0, 0.05, 0, 0, 0, 0];
    const filtered = setup(arm6, q);
    const pf = params({ ...noCaps, dampSmallestOnly: true });
    controlStep(filtered.ws, filtered.state, pf, twist, 0.002, filtered.report);
    expect(filtered.report.dampedDirections).toBe(2);
    const reference = filteredBySvd(J, 6, twist, 0.04, 0.04);
    expect(maxAbsDiff(filtered.state.qdot, reference)).toBeLessThan(1e-9 * norm(reference));
    // Peak joint rate over 0.5 s: filtering within 25 % of full DLS (derived: the λ_i differ only slightly).
    const peakFilter = Math.max(...runTwist(arm6, q, pf, twist, 0.002, 250).peakRate);
    const peakFull = Math.max(...runTwist(arm6, q, params(noCaps), twist, 0.002, 250).peakRate);
    expect(peakFull / DEG).toBeLessThan(20);
    expect(peakFilter).toBeLessThan(1.25 * peakFull);
    // Damping only the smallest direction (the old rule) needs more than ten times that.
    const smallestOnly = new Float64Array(6);
    const svd = new SingularValueDecomposition(new Matrix(Array.from({ length: 6 }, (_, r) => Array.from(J.slice(6 * r, 6 * r + 6)))));
    const u6 = Array.from({ length: 6 }, (_, r) => svd.leftSingularVectors.get(r, 5));
    dampedLeastSquaresInto(J, 6, 6, twist, dampingFor(sigma[5]!, { epsilon: 0.04, lambdaMax: 0.04 }), smallestOnly, u6);
    expect(Math.max(...Array.from(smallestOnly, Math.abs))).toBeGreaterThan(10 * peakFull);
  });

  it("uses the full eigen-decomposition when a third σ may be below ε, and damps every such direction", () => {
    // Derived fallback rule (control-step.ts); oracle: the SVD form with ml-matrix, as above. At the ready
    // pose σ4..σ6 ≈ 0.31, 0.27, 0.18 are all below ε = 0.5.
    const twist = [0.05, 0.02, -0.03, 0.1, 0, 0.1];
    const { ws, state, report } = setup(arm6);
    controlStep(ws, state, params({ ...noCaps, dampSmallestOnly: true, damping: { kind: "singular-value", epsilon: 0.5, lambdaMax: 0.04 } }), twist, 0.002, report);
    expect(report.filterFullDecomposition).toBe(true);
    expect(report.dampedDirections).toBe(3);
    const reference = filteredBySvd(geometricJacobian(arm6.model, arm6.readyPose), 6, twist, 0.5, 0.04);
    expect(maxAbsDiff(state.qdot, reference)).toBeLessThan(1e-9 * norm(reference));
  });

  it("damps every direction (full DLS) with a fixed λ, which has no region width ε", () => {
    // Our rule (control-step.ts, the cautious reading); oracle: dampedLeastSquares with the same λ.
    const q = [0, -20, 30, 0, 3, 0].map((d) => d * DEG);
    const twist = [0.02, 0, 0.03, 0, 0.1, 0];
    const { ws, state, report } = setup(arm6, q);
    controlStep(ws, state, params({ ...noCaps, dampSmallestOnly: true, damping: { kind: "fixed", lambda: 0.03 } }), twist, 0.002, report);
    const expected = dampedLeastSquares(geometricJacobian(arm6.model, q), 6, 6, twist, 0.03);
    expect(maxAbsDiff(state.qdot, expected)).toBeLessThan(1e-12 * norm(expected));
    expect(report.dampedDirections).toBe(6);
  });
});

describe("controlStep null-space term (seven-axis arm)", () => {
  const dt = 0.002, speed = 0.05, side = 0.05;
  const sideSteps = Math.round(side / speed / dt);
  const corners = [[1, 0, 0], [0, 1, 0], [-1, 0, 0], [0, -1, 0]];

  /** Traces the 5 cm square in the world x-y plane `loops` times with constant twists per side. */
  function square(state: ControlState, ws: ReturnType<typeof createControlWorkspace>, p: ControlParams, loops: number, report: ControlStepReport) {
    for (let l = 0; l < loops; l++) {
      for (const c of corners) {
        const tw = [c[0]! * speed, c[1]! * speed, c[2]! * speed, 0, 0, 0];
        for (let s = 0; s < sideSteps; s++) {
          controlStep(ws, state, p, tw, dt, report);
          if (report.fault !== "none") throw new Error(report.fault);
        }
      }
    }
  }

  it("returns the joints after ten 5 cm squares with at least ten times less drift than minimum-norm", () => {
    // Issue 8 (review, not a source): minimum-norm rate control is not cyclic — ten squares left the joints
    // 2.9° off while the TCP came back. Liégeois 1977: the gradient of a joint-limit criterion projected into
    // the null space. Drift correction K·dt = 0.5 (Siciliano et al. 2009, from memory) brings the TCP back
    // in both runs. Drift is measured over ten loops after one first loop, in which the term moves the
    // joints from their rest optimum onto the repeating motion (a bounded, one-time change, not drift).
    const drift = { gain: 250, maxPositionError: 0.005, maxOrientationError: 0.05 };
    const result = (nullSpace: ControlParams["nullSpace"]) => {
      const { ws, state, report } = setup(arm7);
      const p = params({ driftCorrection: drift, nullSpace });
      square(state, ws, p, 1, report);
      const q1 = Array.from(state.q);
      const T1 = forwardPose(arm7.model, state.q);
      square(state, ws, p, 10, report);
      const T = forwardPose(arm7.model, state.q);
      return {
        jointDrift: Math.max(...q1.map((v, i) => Math.abs(state.q[i]! - v))),
        tcp: norm([T[3]! - T1[3]!, T[7]! - T1[7]!, T[11]! - T1[11]!]),
      };
    };
    const minimumNorm = result(null);
    const withTerm = result({ gain: 0.5 });
    expect(minimumNorm.jointDrift / DEG).toBeGreaterThan(1);
    expect(withTerm.jointDrift).toBeLessThanOrEqual(minimumNorm.jointDrift / 10);
    expect(minimumNorm.tcp).toBeLessThan(0.05e-3);
    expect(withTerm.tcp).toBeLessThan(0.05e-3);
  }, 30_000);

  it("keeps the arm moving when one joint stands at its stand-off and minimum-norm would turn it further", () => {
    // Liégeois 1977 (the term pulls joints toward the middle of their range); our slow-down rule stops any
    // motion that turns a joint at its stand-off further (limits.ts). Case: joint 1 at 170° − 5°, a
    // 0.05 m/s twist along −y whose minimum-norm solution turns joint 1 further up (checked). Not every
    // case can be helped: a joint whose motion the task itself needs, with little null-space component,
    // still stops the arm (e.g. joint 3 here for −y) — so this shows the term working, not a guarantee.
    const q0 = [...arm7.readyPose];
    q0[0] = arm7.model.joints[0]!.max! - 5 * DEG;
    const twist = [0, -0.05, 0, 0, 0, 0];
    expect(dampedLeastSquares(geometricJacobian(arm7.model, q0), 6, 7, twist, 0)[0]).toBeGreaterThan(0);
    const moved = (nullSpace: ControlParams["nullSpace"]) => {
      let held = 0;
      const T0 = forwardPose(arm7.model, q0);
      const run = runTwist(arm7, q0, params({ jointLimitMargin: 5 * DEG, nullSpace }), twist, dt, 500, 0, (_s, _st, report) => {
        if (report.scale === 0) held++;
      });
      const T = forwardPose(arm7.model, run.state.q);
      return { held, along: -(T[7]! - T0[7]!), q1: run.state.q[0]! };
    };
    const minimumNorm = moved(null);
    expect(minimumNorm.held).toBe(500);
    expect(Math.abs(minimumNorm.along)).toBe(0);
    const withTerm = moved({ gain: 0.5 });
    expect(withTerm.held).toBe(0);
    expect(withTerm.along).toBeCloseTo(0.05, 3); // the full 50 mm in 1 s
    expect(withTerm.q1).toBeLessThan(q0[0]!); // joint 1 moved away from its limit
  });

  it("never moves the arm at rest: a zero twist gives no motion even with the term and drift correction on", () => {
    // Our contract (no motion without a command; common practice, no source).
    const { ws, state, report } = setup(arm7, [0.3, 0.6, -0.4, -1.2, 0.5, 0.9, -0.3]);
    const q0 = Array.from(state.q);
    const p = params({ nullSpace: { gain: 2 }, driftCorrection: { gain: 250, maxPositionError: 0.005, maxOrientationError: 0.05 }, jointAccelLimits: ratedAccels(arm7) });
    for (let s = 0; s < 500; s++) controlStep(ws, state, p, [0, 0, 0, 0, 0, 0], 0.002, report);
    expect(Array.from(state.q)).toEqual(q0);
  });

  it("leaves the TCP motion unchanged away from singularities, and does nothing on a six-axis arm", () => {
    // Derived: with λ = 0, J(I − J⁺J) = 0, so J·qdot is the command; for n = 6 there is no null space.
    const tw = [0.03, 0.02, -0.01, 0.1, -0.05, 0.2];
    const seven = setup(arm7, [0.3, 0.6, -0.4, -1.2, 0.5, 0.9, -0.3]);
    for (let s = 0; s < 50; s++) controlStep(seven.ws, seven.state, params({ nullSpace: { gain: 2 } }), tw, 0.002, seven.report);
    expect(seven.report.lambda).toBe(0);
    expect(maxAbsDiff(seven.report.achievedTwist, tw)).toBeLessThan(1e-9);
    const a = setup(arm6), b = setup(arm6);
    for (let s = 0; s < 50; s++) {
      controlStep(a.ws, a.state, params({ nullSpace: { gain: 2 } }), tw, 0.002, a.report);
      controlStep(b.ws, b.state, params(), tw, 0.002, b.report);
    }
    expect(Array.from(a.state.q)).toEqual(Array.from(b.state.q));
  });
});

describe("the DLS gain bound", () => {
  it("never gives |qdot| above |v|/(2λ) for full DLS, over random configurations, twists and λ, nor in the control step's schedule", () => {
    // Buss 2004 (notes, SVD analysis) and Deo & Walker 1995: the gain σ/(σ² + λ²) peaks at 1/(2λ) for
    // σ = λ, so |qdot| ≤ |v|/(2λ) in any configuration.
    const next = rng(91);
    let checkedStep = 0;
    for (const demo of [arm6, arm7]) {
      const n = demo.model.joints.length;
      for (let trial = 0; trial < 300; trial++) {
        const q = demo.model.joints.map((j) => j.min! + (j.max! - j.min!) * next());
        if (trial % 3 === 0) q[4] = 1e-4 * (2 * next() - 1); // near a wrist singularity
        const v = [0, 1, 2, 3, 4, 5].map((i) => (i < 3 ? 0.3 : 1.5) * (2 * next() - 1));
        const J = geometricJacobian(demo.model, q);
        const lambda = 0.001 + 0.1 * next();
        expect(norm(dampedLeastSquares(J, 6, n, v, lambda))).toBeLessThanOrEqual((norm(v) / (2 * lambda)) * (1 + 1e-9));
        // The step's own λ (singular-value schedule) and qdot before the common scale factor.
        const { ws, state, report } = setup(demo, q);
        controlStep(ws, state, params({ tcpLinearCap: Infinity, tcpAngularCap: Infinity, jointLimitMargin: 0, jointLimitSlowZone: 0 }), v, 0.002, report);
        if (report.lambda > 0 && report.scale > 0) {
          expect(norm(Array.from(state.qdot, (x) => x / report.scale))).toBeLessThanOrEqual((norm(v) / (2 * report.lambda)) * (1 + 1e-9));
          checkedStep++;
        }
      }
    }
    expect(checkedStep).toBeGreaterThan(100);
  });
});

describe("the control step's damping and limits are damping.ts's and limits.ts's", () => {
  it("reports the λ of dampingForScheme for thousands of random configurations and every scheme", () => {
    // Pinning test (issue 8: the step had private copies that disagreed for NaN σ). The step calls
    // damping.ts; this checks the reported λ against it exactly, including exact singularities.
    const next = rng(92);
    const schemes: ControlParams["damping"][] = [
      { kind: "singular-value", epsilon: 0.04, lambdaMax: 0.04 }, { kind: "singular-value", epsilon: 0.3, lambdaMax: 0.1 },
      { kind: "fixed", lambda: 0.02 }, { kind: "manipulability", w0: 0.05, lambda0: 0.03 },
    ];
    for (let trial = 0; trial < 2000; trial++) {
      const demo = trial % 2 ? arm7 : arm6;
      const q = demo.model.joints.map((j) => (trial % 10 === 0 ? 0 : j.min! + (j.max! - j.min!) * next()));
      const damping = schemes[trial % schemes.length]!;
      const { ws, state, report } = setup(demo, q);
      controlStep(ws, state, params({ damping }), [0.01, 0, 0, 0, 0, 0.1], 0.002, report);
      expect(report.lambda).toBe(dampingFor(report.sigmaMin, damping, report.manipulability));
    }
  });

  it("reports the joint-rate and joint-limit factors of limits.ts for thousands of random joint jogs", () => {
    // Pinning test: the step calls capScale/jointLimitScale's code (limits.ts); checked exactly here with
    // the caps combined as documented (the smaller of the profile cap and the arm's maxSpeed).
    {
      const next = rng(93);
      const edge = [0, 1e-300, 1e-9, 1, 1e9, Infinity];
      for (let trial = 0; trial < 3000; trial++) {
        const demo = trial % 2 ? arm7 : arm6;
        const n = demo.model.joints.length;
        const q = demo.model.joints.map((j) => j.min! + (j.max! - j.min!) * next());
        const rates = q.map(() => (trial % 7 === 0 ? edge[Math.floor(next() * edge.length)]! : 20 * (next() - 0.5)) * (next() < 0.5 ? -1 : 1));
        if (rates.some((r) => !Number.isFinite(r))) continue; // a non-finite command is refused before the limits
        const caps = q.map(() => (next() < 0.2 ? Infinity : 5 * next()));
        const margin = next() < 0.3 ? 0 : 0.2 * next();
        const zone = next() < 0.3 ? 0 : 0.5 * next();
        const dt = 0.001 + 0.01 * next();
        const accel = next() < 0.5 ? null : q.map(() => (next() < 0.2 ? Infinity : 1 + 50 * next()));
        const { ws, state, report } = setup(demo, q);
        jointJogStep(ws, state, params({ jointRateCaps: caps, jointLimitMargin: margin, jointLimitSlowZone: zone, jointAccelLimits: accel, tcpLinearCap: Infinity, tcpAngularCap: Infinity }), rates, dt, report);
        const combined = caps.map((c, i) => Math.min(c, demo.model.joints[i]!.maxSpeed!));
        const rated = accel ? accel.map((a, i) => Math.min(a, ratedJointAccel(demo.model.joints[i]!))) : null;
        expect(report.jointCapScale).toBe(capScale(rates, combined, n));
        const mins = demo.model.joints.map((j) => j.min!), maxs = demo.model.joints.map((j) => j.max!);
        expect(report.limitScale).toBe(jointLimitScale(q, rates, mins, maxs, combined, n, q.map(() => margin), q.map(() => zone), dt, null, rated));
      }
    }
  });

  it("reports the acceleration factor and its joint of limits.ts accelScaleInto, from random previous rates", () => {
    // Pinning test: the step writes accelScaleInto's loop out (fused with its other sweeps over the joints);
    // checked exactly against limits.ts wherever the first blend stands (no joint-limit bisection).
    const next = rng(94);
    let checked = 0, limiting = 0;
    for (let trial = 0; trial < 3000; trial++) {
      const demo = trial % 2 ? arm7 : arm6;
      const n = demo.model.joints.length;
      const q = demo.model.joints.map((j) => 0.6 * (j.min! + (j.max! - j.min!) * next()));
      const rates = q.map(() => 2 * (next() - 0.5));
      const dt = 0.001 + 0.004 * next();
      const accel = q.map(() => (next() < 0.2 ? Infinity : 1 + 50 * next()));
      const { ws, state, report } = setup(demo, q);
      for (let i = 0; i < n; i++) state.qdot[i] = 2 * (next() - 0.5);
      const prev = Float64Array.from(state.qdot);
      jointJogStep(ws, state, params({ jointAccelLimits: accel, tcpLinearCap: Infinity, tcpAngularCap: Infinity }), rates, dt, report);
      if (report.binding === "joint-limit") continue;
      const rated = accel.map((a, i) => Math.min(a, ratedJointAccel(demo.model.joints[i]!)));
      const box = new Float64Array([dt]), bind = new Int32Array(1);
      accelScaleInto(prev, rates.map((r) => report.scale * r), rated, n, box, bind);
      expect(report.accelScale).toBe(box[0]);
      expect(report.accelBindingJoint).toBe(box[0]! < 1 ? bind[0] : -1);
      checked++;
      if (box[0]! < 1) limiting++;
    }
    expect(checked).toBeGreaterThan(2000);
    expect(limiting).toBeGreaterThan(1000);
  });
});

describe("the stop-before guard's need for an acknowledgement (issue 13, item 7)", () => {
  // Behaviour of our guard design (PRODUCT.md step 7; ISO 10218-1:2011 singularity rule from memory): once
  // the guard has stopped the arm, the step reports "stopped" — an acknowledgement is needed — until it is
  // given or σ_min is back above releaseFactor·σ_stop, whatever the operator does meanwhile.
  const start = [0, -20, 30, 0, 25, 0].map((d) => d * DEG);
  const J = geometricJacobian(arm6.model, start);
  const sigmaStop = singularValues(J, 6, 6)[5]! / 3;
  const toward = matVec(J, 6, 6, [0, 0, 0, 0, -1, 0]).map((v) => v * 0.5); // joint 5 toward 0: into the wrist singularity
  const zero = [0, 0, 0, 0, 0, 0];
  const p = params({ jointAccelLimits: ratedAccels(arm6, 0.5), guard: { policy: "stop-before", sigmaStop, releaseFactor: 1.5 } });

  function stoppedByTheGuard() {
    const { ws, state, report } = setup(arm6, start);
    for (let s = 0; s < 5000 && report.binding !== "singularity-guard"; s++) controlStep(ws, state, p, toward, 0.002, report);
    expect(report.binding).toBe("singularity-guard");
    return { ws, state, report };
  }

  it("keeps saying so while the operator goes on pushing: the arm stays held, it does not creep on", () => {
    const { ws, state, report } = stoppedByTheGuard();
    // Brake to rest under the push, then push on for a second.
    for (let s = 0; s < 500; s++) {
      controlStep(ws, state, p, toward, 0.002, report);
      expect(report.guardState).toBe("stopped");
    }
    const held = Array.from(state.q);
    for (let s = 0; s < 500; s++) {
      controlStep(ws, state, p, toward, 0.002, report);
      expect(report.guardState).toBe("stopped");
    }
    expect(maxAbsDiff(state.q, held)).toBe(0);
  });

  it("keeps saying so once the push stops and through a controlled stop, until acknowledged", () => {
    const { ws, state, report } = stoppedByTheGuard();
    // The controlled stop of a released enabling control ramps the achieved joint rates (a joint step).
    for (let s = 0; s < 200; s++) {
      const rates = Array.from(state.qdot, (v) => v * 0.9);
      jointJogStep(ws, state, p, rates, 0.002, report);
      expect(report.guardState).toBe("stopped");
    }
    for (let s = 0; s < 500; s++) {
      controlStep(ws, state, p, zero, 0.002, report);
      expect(report.guardState).toBe("stopped");
    }
    state.singularityAcknowledged = true;
    controlStep(ws, state, p, toward, 0.002, report);
    expect(report.guardState).toBe("acknowledged");
    expect(report.binding).not.toBe("singularity-guard");
  });

  it("lets the arm back out, and stops needing it once σ_min is above releaseFactor·σ_stop", () => {
    const { ws, state, report } = stoppedByTheGuard();
    for (let s = 0; s < 500; s++) controlStep(ws, state, p, toward, 0.002, report); // braked to rest, held
    const away = toward.map((v) => -v);
    let cleared = -1;
    for (let s = 0; s < 5000 && cleared < 0; s++) {
      controlStep(ws, state, p, away, 0.002, report);
      expect(report.binding).not.toBe("singularity-guard");
      if (report.sigmaMin < sigmaStop * 1.5) expect(report.guardState).toBe("backing-out");
      else cleared = s;
    }
    expect(cleared).toBeGreaterThan(0);
    expect(report.guardState).toBe("clear");
    // Stopping in between, before the release band, still needs the acknowledgement: checked above; here
    // the next approach stops again.
    for (let s = 0; s < 5000 && report.binding !== "singularity-guard"; s++) controlStep(ws, state, p, toward, 0.002, report);
    expect(report.guardState).toBe("stopped");
  });

  it("backing out part of the way and stopping still needs it", () => {
    const { ws, state, report } = stoppedByTheGuard();
    for (let s = 0; s < 300; s++) controlStep(ws, state, p, toward, 0.002, report); // held
    for (let s = 0; s < 20; s++) controlStep(ws, state, p, toward.map((v) => -v), 0.002, report);
    expect(report.sigmaMin).toBeLessThan(sigmaStop * 1.5);
    expect(report.guardState).toBe("backing-out");
    for (let s = 0; s < 300; s++) controlStep(ws, state, p, zero, 0.002, report);
    expect(report.guardState).toBe("stopped");
  });
});
