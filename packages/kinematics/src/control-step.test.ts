import { describe, expect, it } from "vitest";
import {
  KinematicsInputError, controlStep, createControlReport, createControlState, createControlWorkspace,
  defaultControlParams, demoArms, forwardPose, geometricJacobian, jointJogStep, singularValues,
  validateControlParams,
} from "./index.ts";
import type { ControlParams, DemoArm } from "./index.ts";
import { matVec, maxAbsDiff, norm, rng } from "./test-fixtures.ts";

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
    // ISO 10218-1 singularity rule, from memory (PRODUCT.md step 7); behaviour of our guard design.
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
    // closed-loop correction K·e with 0 < K·dt < 2 (Siciliano et al. 2009 sect. 3.7, from memory) removes it.
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

  it("faults instead of integrating when the drift gain violates K·dt < 2", () => {
    // Derived stability bound (METHODS.md §6).
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
});
