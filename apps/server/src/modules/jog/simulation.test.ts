import { describe, expect, it } from "vitest";
import { demoArms, ratedJointAccel } from "@jogwright/kinematics";
import { defaultProfileParams, recordedFrameSchema, type ProfileParams, type RecordedFrame } from "@jogwright/shared";
import { JogSimulation } from "./simulation.ts";

/**
 * The live simulation (motion gate + control step + frames + summary) in simulated ticks: no timers, no
 * wall clock, so nothing here can flake under load. Six-axis demo arm, the default profile (500 Hz, 200 ms
 * watchdog, 1 m/s², joint accelerations 50 % of the rated 4 × maxSpeed) with stick shaping off.
 */

const arm = demoArms.find((a) => a.slug === "cell-arm-6")!;
const DEG = Math.PI / 180;
const ZERO6 = [0, 0, 0, 0, 0, 0];

function profile(over: Partial<ProfileParams> = {}): ProfileParams {
  const base = defaultProfileParams(arm.model.joints.map((j) => j.maxSpeed!));
  return { ...base, shaping: { ...base.shaping, deadband: 0, expo: 0 }, speedOverride: { defaultPercent: 40, maxPercent: 100 }, ...over };
}

class Driver {
  readonly sim: JogSimulation;
  private seq = 0;
  constructor(params: ProfileParams = profile(), estopLatched = false) {
    this.sim = new JogSimulation({ arm: arm.model, readyPose: arm.readyPose, params, estopLatched });
  }
  input(enabling: boolean, axes: number[], mode: "cartesian" | "joint" = "cartesian", overridePercent = 40): void {
    this.sim.applyInput({ type: "input", seq: this.seq++, clientTimeMs: 0, enabling, mode, frame: "world", axes, overridePercent });
  }
  /** Holds the enabling control with these axes for `ticks` (an input every 5 ticks: 100 Hz, the drive page). */
  hold(axes: number[], ticks: number, mode: "cartesian" | "joint" = "cartesian", overridePercent = 40): void {
    for (let k = 0; k < ticks; k++) {
      if (k % 5 === 0) this.input(true, axes, mode, overridePercent);
      this.sim.tick();
    }
  }
  frame(): RecordedFrame {
    return recordedFrameSchema.parse(JSON.parse("{" + this.sim.frameBody() + "}"));
  }
  tcp(): number[] {
    const f = JSON.parse("{" + this.sim.frameBody() + "}") as RecordedFrame;
    return [f.pose[3]!, f.pose[7]!, f.pose[11]!];
  }
  isAtRest(): boolean {
    return this.sim.state.qdot.every((v) => v === 0);
  }
}

/** Stop time T = max(|v|/a_lin, |ω|/a_ang, |q̇_i|/a_i), written out here (derived). */
function stopTime(sim: JogSimulation, p: ProfileParams): number {
  const a = sim.report.achievedTwist;
  const times = [Math.hypot(a[0]!, a[1]!, a[2]!) / p.shaping.linearAccelMPerS2, Math.hypot(a[3]!, a[4]!, a[5]!) / p.shaping.angularAccelRadPerS2];
  sim.state.qdot.forEach((v, i) => times.push(Math.abs(v) / (ratedJointAccel(arm.model.joints[i]!) * p.jointAccelFraction)));
  return Math.max(...times);
}

describe("the enabling control at session start", () => {
  it("a session started with the control held does not move until a release is seen (issue 8: the server armed it at start)", () => {
    const d = new Driver();
    const q0 = Array.from(d.sim.state.q);
    d.hold([0, 0, 1, 0, 0, 0], 500);
    expect(Array.from(d.sim.state.q)).toEqual(q0);
    const f = d.frame();
    expect(f.enabled).toBe(false);
    expect(f.warnings.join(" ")).toMatch(/Release and press the enabling control again to move \(the session started\)/);
    d.input(false, ZERO6);
    d.hold([0, 0, 1, 0, 0, 0], 50);
    expect(d.frame().enabled).toBe(true);
    expect(d.isAtRest()).toBe(false);
  });

  it("a session started latched (estopLatched: the station's latch) shows the latch and moves only after reset, release and press", () => {
    const d = new Driver(profile(), true);
    const q0 = Array.from(d.sim.state.q);
    d.input(false, ZERO6);
    d.hold([0, 0, 1, 0, 0, 0], 200);
    let f = d.frame();
    expect(f).toMatchObject({ estopLatched: true, stopReason: "emergency-stop", enabled: false });
    expect(f.stopping).toMatchObject({ kind: "instant-halt", isActive: true, timeS: 0, distanceM: 0 });
    expect(Array.from(d.sim.state.q)).toEqual(q0);
    d.sim.resetEstop(); // the control is held: the reset never restarts motion
    d.hold([0, 0, 1, 0, 0, 0], 200);
    f = d.frame();
    expect(f.estopLatched).toBe(false);
    expect(Array.from(d.sim.state.q)).toEqual(q0);
    d.input(false, ZERO6);
    d.hold([0, 0, 1, 0, 0, 0], 50);
    expect(d.isAtRest()).toBe(false);
    // The latched start is not a stop event of this session.
    expect(d.sim.summary().stops["emergency-stop"]).toBeUndefined();
  });
});

describe("bounded stops", () => {
  it("issue 8 finding: after 2 s of full stick on x+y+z, releasing stops within its computed time and v·T/2 (was 434 ms, 30.1 mm)", () => {
    // The old server (ramp from the commanded √3 × 250 mm/s) took 434 ms and 30.1 mm from 106 mm/s in this
    // scenario (reproduced before the change; v²/2a = 5.6 mm). Now the achieved motion ramps down in
    // T = max(v/a, |ω|/α, |q̇_i|/a_i) with distance ≤ v·T/2 (+ one tick) (derived). The review's default
    // profile damped through singularities; the stop-before default would brake near the elbow first.
    const p = profile({ guard: { policy: "damp-through", sigmaStopM: 0.02 } });
    const d = new Driver(p);
    d.input(false, ZERO6);
    d.hold([1, 1, 1, 0, 0, 0], 1000, "cartesian", 100);
    const v = d.sim.report.tcpLinearSpeed;
    expect(v).toBeGreaterThan(0.05);
    const T = stopTime(d.sim, p);
    const predicted = d.frame().stopPredictions["enabling-released"];
    expect(predicted.timeS).toBeCloseTo(T, 9);
    d.input(false, ZERO6);
    let ticks = 0, distance = 0, tcp = d.tcp();
    while (!d.isAtRest() && ticks < 2000) {
      d.sim.tick();
      const next = d.tcp();
      distance += Math.hypot(next[0]! - tcp[0]!, next[1]! - tcp[1]!, next[2]! - tcp[2]!);
      tcp = next;
      if (!d.isAtRest()) ticks++;
    }
    const dt = 1 / p.tickRateHz;
    expect(ticks * dt).toBeLessThanOrEqual(T + dt);
    expect(distance).toBeLessThanOrEqual((v * T) / 2 + v * dt);
    expect(ticks * dt).toBeLessThan(0.3);
    // The summary records it: one stop on release, measured as we measured it.
    const m = d.sim.summary().stopsMeasured["enabling-released"]!;
    expect(m.count).toBe(1);
    expect(m.maxTimeS).toBeCloseTo(ticks * dt, 9);
    expect(m.maxDistanceM).toBeCloseTo(distance, 5);
  });

  it("the summary records the watchdog stop with its wait, and the instant halt at time and distance zero", () => {
    const p = profile();
    const d = new Driver(p);
    d.input(false, ZERO6);
    d.hold([0, 0, 1, 0, 0, 0], 300);
    d.input(true, [0, 0, 1, 0, 0, 0]); // the last input, then silence
    const v = d.sim.report.tcpLinearSpeed;
    const T = stopTime(d.sim, p);
    let ticks = 0;
    while (ticks < 2000 && (ticks === 0 || !d.isAtRest())) {
      d.sim.tick();
      ticks++;
    }
    expect(d.frame().stopReason).toBe("watchdog");
    const w = d.sim.summary().stopsMeasured.watchdog!;
    // Watchdog 200 ms + ramp T; distance v·0.2 + v·T/2 (derived; a tick of slack each).
    expect(w.maxTimeS).toBeLessThanOrEqual(0.2 + T + 1 / p.tickRateHz);
    expect(w.maxTimeS).toBeGreaterThanOrEqual(0.2);
    expect(w.maxDistanceM).toBeLessThanOrEqual(v * 0.2 + (v * T) / 2 + v / p.tickRateHz);
    expect(w.maxExcessDistanceM).toBeLessThan(1e-9); // no longer than its prediction at the last input
    d.input(false, ZERO6);
    d.hold([0, 0, 1, 0, 0, 0], 200);
    d.sim.emergencyStop();
    expect(d.isAtRest()).toBe(true);
    const s = d.sim.summary();
    expect(s.stopsMeasured["instant-halt"]).toEqual({ count: 1, maxTimeS: 0, maxDistanceM: 0, maxExcessDistanceM: 0 });
    expect(s.stops).toMatchObject({ watchdog: 1, "emergency-stop": 1 });
  });

  it("the stop-before guard's stop is measured from its first braking step to rest, within its prediction", () => {
    // Default profile (stop-before, σ_stop = 0.02 m): full stick on x+y+z drives the elbow towards its
    // singularity and the guard brakes within the joint acceleration limits, T = max|q̇_i|/a_i (derived).
    const p = profile();
    const d = new Driver(p);
    d.input(false, ZERO6);
    let before = { time: 0, distance: 0 };
    let braking = false;
    for (let k = 0; k < 3000 && !(braking && d.isAtRest()); k++) {
      if (k % 5 === 0) d.input(true, [1, 1, 1, 0, 0, 0], "cartesian", 100);
      if (!braking) {
        d.sim.gate.updatePredictions(d.sim.report, d.sim.state.qdot);
        before = { ...d.sim.gate.predictions["singularity-guard"] };
      }
      d.sim.tick();
      if (d.sim.report.guardState === "stopped") braking = true;
    }
    expect(braking).toBe(true);
    d.hold([1, 1, 1, 0, 0, 0], 5, "cartesian", 100); // the gate sees the rest on its next tick
    expect(before.time).toBeGreaterThan(0.05); // it was moving when the guard began to brake
    const g = d.sim.summary().stopsMeasured["singularity-guard"]!;
    expect(g.count).toBe(1);
    // Within the prediction of the tick before braking began, plus 10 ticks for the guard's look-ahead
    // granularity (our tolerance, no source); the TCP path within the predicted v·T/2.
    expect(g.maxTimeS).toBeLessThanOrEqual(before.time + 10 / p.tickRateHz);
    expect(g.maxDistanceM).toBeLessThanOrEqual(before.distance);
    expect(d.frame().stopReason).toBe("singularity-guard");
  });

  it("stalls reported by the scheduler are excused from the watchdog; silence on top of them is not", () => {
    const d = new Driver();
    d.input(false, ZERO6);
    d.hold([0, 0, 1, 0, 0, 0], 100);
    d.input(true, [0, 0, 1, 0, 0, 0]);
    // 300 ms of stall reported over 150 ticks (2 ms each): the watchdog (100 ticks) does not trip.
    for (let k = 1; k <= 150; k++) d.sim.tick(k * 2);
    expect(d.frame().stopReason).not.toBe("watchdog");
    for (let k = 0; k < 101; k++) d.sim.tick(300);
    expect(d.frame().stopReason).toBe("watchdog");
  });
});

describe("joint accelerations", () => {
  it("issue 8 finding: with λmax = 0.005 through the wrist singularity no joint exceeds its acceleration limit (was 8,300 °/s²)", () => {
    // The review: λmax = 0.005, every joint rate under its cap, yet joints 4 and 6 reached 8,300 °/s². The
    // limit now: 50 % of the rated 4 × maxSpeed (profile default; arm default, common practice, no source).
    // Peak |q̈_i| from successive q̇ computed here, tick by tick, against the limit and the summary.
    const p = profile({
      damping: { kind: "singular-value", epsilonM: 0.04, lambdaMaxM: 0.005 },
      guard: { policy: "damp-through", sigmaStopM: 0.02 },
    });
    const limits = arm.model.joints.map((j) => ratedJointAccel(j) * p.jointAccelFraction);
    const d = new Driver(p);
    const dt = 1 / p.tickRateHz;
    const peak = new Array(6).fill(0);
    const prev = new Float64Array(6);
    const step = () => {
      prev.set(d.sim.state.qdot);
      d.sim.tick();
      d.sim.state.qdot.forEach((v, i) => (peak[i] = Math.max(peak[i], Math.abs(v - prev[i]!) / dt)));
    };
    // Joint jog to q4 ≈ 40°, q5 ≈ 12° (the wrist approaches q5 = 0 with q4 ≠ 0; PRODUCT.md spherical wrist).
    d.input(false, ZERO6, "joint");
    for (let k = 0; k < 5000 && d.sim.state.q[4]! > 20 * DEG; k++) {
      if (k % 5 === 0) d.input(true, [0, 0, 0, 1, -1, 0], "joint");
      step();
    }
    d.input(false, ZERO6, "joint");
    for (let k = 0; k < 500; k++) step();
    expect(d.sim.state.q[4]!).toBeGreaterThan(0);
    // Cartesian +y −z that drives q5 through 0 (found numerically, derived).
    d.input(false, ZERO6);
    let minSigma = Infinity;
    for (let k = 0; k < 20000 && d.sim.state.q[4]! > -10 * DEG; k++) {
      if (k % 5 === 0) d.input(true, [0, 0.4, -0.4, 0, 0, 0], "cartesian", 100);
      step();
      minSigma = Math.min(minSigma, d.sim.report.sigmaMin);
    }
    expect(d.sim.state.q[4]!).toBeLessThan(-10 * DEG); // passed through q5 = 0
    expect(minSigma).toBeLessThan(0.005); // deep inside the damped region
    peak.forEach((a, i) => expect(a).toBeLessThanOrEqual(limits[i]! * (1 + 1e-9)));
    // The summary's peak is the same backward difference over the same ticks.
    const s = d.sim.summary();
    s.peakJointAccel.forEach((a, i) => expect(a).toBeCloseTo(peak[i], 6));
  });

  it("each frame carries the peak |q̈_i| since the previous frame, and the stopping prediction of its step", () => {
    const p = profile();
    const d = new Driver(p);
    d.input(false, ZERO6);
    d.frame();
    const dt = 1 / p.tickRateHz;
    const prev = new Float64Array(6);
    let peak = new Array(6).fill(0);
    for (let k = 0; k < 300; k++) {
      if (k % 5 === 0) d.input(true, [0, 0, 1, 0, 0, 0]);
      prev.set(d.sim.state.qdot);
      d.sim.tick();
      d.sim.state.qdot.forEach((v, i) => (peak[i] = Math.max(peak[i], Math.abs(v - prev[i]!) / dt)));
      if (k % 8 === 7) {
        const f = d.frame();
        f.jointAccelPeak.forEach((a, i) => expect(a).toBeCloseTo(peak[i], 9));
        peak = new Array(6).fill(0);
      }
    }
    const moving = d.frame();
    const T = stopTime(d.sim, p);
    expect(moving.stopping).toMatchObject({ kind: "enabling-released", isActive: false });
    expect(moving.stopping.timeS).toBeCloseTo(T, 9);
    expect(moving.stopPredictions.watchdog.timeS).toBeCloseTo(0.2 + T, 9);
    d.input(false, ZERO6);
    d.sim.tick();
    const stopping = d.frame();
    expect(stopping.stopping).toMatchObject({ kind: "enabling-released", isActive: true });
    expect(stopping.stopping.timeS).toBeCloseTo(T - dt, 9);
  });
});
