import { describe, expect, it } from "vitest";
import { ratedJointAccel } from "./arm.ts";
import {
  MotionGate, controlStep, controlledStopTime, createControlReport, createControlState, createControlWorkspace,
  defaultControlParams, demoArms, forwardPose, jointJogStep,
} from "./index.ts";
import type { ControlParams, DemoArm, MotionGateConfig } from "./index.ts";

/**
 * The motion gate in simulated ticks only (no timers, no wall clock): the gate and the control step on the
 * demo six-axis arm at 500 Hz, as the server runs them (apps/server/src/modules/jog/simulation.ts). Every
 * stop is measured here independently of the gate: time = ticks until q̇ = 0, distance = the TCP path from
 * the forward pose of each tick.
 */

const arm6 = demoArms.find((a) => a.slug === "cell-arm-6")!;
const RATE_HZ = 500;
const DT = 1 / RATE_HZ;
const ZERO6 = [0, 0, 0, 0, 0, 0];

/** The default profile's numbers (packages/shared defaultProfileParams): caps 50 % of rated, 250 mm/s, 1 m/s². */
function gateConfig(demo: DemoArm, over: Partial<MotionGateConfig> = {}, accelFraction = 0.5): MotionGateConfig {
  const joints = demo.model.joints;
  return {
    jointCount: joints.length,
    tickRateHz: RATE_HZ,
    watchdog: 0.2,
    deadband: 0,
    expo: 0,
    tcpLinearCap: 0.25,
    tcpAngularCap: Math.PI / 2,
    jointRateCaps: joints.map((j) => 0.5 * j.maxSpeed!),
    maxOverride: 1,
    linearAccel: 1,
    angularAccel: 4,
    jointAccel: joints.map((j) => ratedJointAccel(j) * accelFraction),
    ...over,
  };
}

/** The gate in front of the control step, with the server's dispatch (hold = q̇ 0, no step). */
class Rig {
  readonly ws;
  readonly state;
  readonly report = createControlReport();
  readonly gate: MotionGate;
  readonly params: ControlParams;
  readonly toolParams: ControlParams;
  readonly cfg: MotionGateConfig;
  /** TCP position after each tick, and q̇ before the latest tick. */
  tcp: number[];
  readonly qdotBefore: Float64Array;

  constructor(demo: DemoArm, cfg: MotionGateConfig, params: Partial<ControlParams> = {}) {
    this.cfg = cfg;
    this.ws = createControlWorkspace(demo.model);
    this.state = createControlState(demo.model, demo.readyPose);
    this.gate = new MotionGate(cfg);
    // jointAccelLimits: the control step's own acceleration limit (issue 8, Helper A), the gate's values.
    this.params = {
      ...defaultControlParams(),
      jointRateCaps: cfg.jointRateCaps,
      tcpLinearCap: cfg.tcpLinearCap,
      tcpAngularCap: cfg.tcpAngularCap,
      guard: { policy: "damp-through", sigmaStop: 0.02, releaseFactor: 1.5 },
      jointAccelLimits: cfg.jointAccel,
      nullSpace: null,
      ...params,
    } as ControlParams;
    this.toolParams = { ...this.params, twistFrame: "tool" };
    this.tcp = this.position();
    this.qdotBefore = new Float64Array(this.state.n);
  }

  position(): number[] {
    const p = forwardPose(arm6.model, this.state.q);
    return [p[3]!, p[7]!, p[11]!];
  }

  tick(): void {
    this.qdotBefore.set(this.state.qdot);
    const c = this.gate.tick(this.report, this.state.qdot);
    if (c.acknowledge) this.state.singularityAcknowledged = true;
    if (c.action === "cartesian") controlStep(this.ws, this.state, c.frame === "tool" ? this.toolParams : this.params, c.twist, DT, this.report);
    else if (c.action === "joint" || c.action === "stop") jointJogStep(this.ws, this.state, this.params, c.jointRates, DT, this.report);
    else {
      this.state.qdot.fill(0);
      this.report.achievedTwist.fill(0);
      this.report.jointCapScale = this.report.tcpLinearScale = this.report.tcpAngularScale = this.report.limitScale = 1;
      this.report.binding = "none";
      this.report.guardState = "off";
    }
    if (this.report.fault !== "none") this.gate.noteFault();
    this.tcp = this.position();
  }

  /** Holds the enabling control with these axes for `ticks`, an input every 5 ticks (100 Hz, the drive page). */
  hold(axes: number[], ticks: number, override = 1, mode: "cartesian" | "joint" = "cartesian"): void {
    for (let k = 0; k < ticks; k++) {
      if (k % 5 === 0) this.gate.setInput(true, mode, "world", override, axes);
      this.tick();
    }
  }

  release(): void {
    this.gate.setInput(false, "cartesian", "world", 1, ZERO6);
  }

  isAtRest(): boolean {
    return this.state.qdot.every((v) => v === 0);
  }

  /** Ticks until q̇ = 0 and the TCP path meanwhile (measured from the forward pose, not the gate). */
  runToRest(maxTicks = 5000, each?: () => void): { ticks: number; distance: number } {
    let ticks = 0, distance = 0;
    while (!this.isAtRest() && ticks < maxTicks) {
      const before = this.tcp;
      this.tick();
      each?.();
      distance += Math.hypot(this.tcp[0]! - before[0]!, this.tcp[1]! - before[1]!, this.tcp[2]! - before[2]!);
      if (!this.isAtRest()) ticks++;
    }
    return { ticks, distance };
  }

  /** From a released control: held with these axes for `ticks` (as hold), then the motion reached. */
  jogFromRelease(axes: number[], ticks: number, override: number): { lin: number; ang: number; qdot: number[] } {
    this.release();
    this.hold(axes, ticks, override);
    return this.motion();
  }

  /** Linear and angular TCP speed and q̇ of the latest step. */
  motion(): { lin: number; ang: number; qdot: number[] } {
    const a = this.report.achievedTwist;
    return { lin: Math.hypot(a[0]!, a[1]!, a[2]!), ang: Math.hypot(a[3]!, a[4]!, a[5]!), qdot: Array.from(this.state.qdot) };
  }
}

/** T = max(|v|/a_lin, |ω|/a_ang, |q̇_i|/a_i), written out here independently of controlledStopTime (derived). */
function expectedStopTime(m: { lin: number; ang: number; qdot: number[] }, cfg: MotionGateConfig): number {
  const times = [m.lin / cfg.linearAccel, m.ang / cfg.angularAccel, ...m.qdot.map((v, i) => Math.abs(v) / (cfg.jointAccel[i] as number))];
  return Math.max(...times);
}

describe("the enabling control", () => {
  it("held from the start of a session does not move the arm until it has been released and pressed again", () => {
    // Issue 8 finding: the server armed the enabling control at session start, so a control already held
    // (or stuck) moved the arm. PRODUCT.md step 2: it counts only after it has been seen released.
    const rig = new Rig(arm6, gateConfig(arm6));
    const q0 = Array.from(rig.state.q);
    rig.hold([0, 0, 1, 0, 0, 0], 200);
    expect(Array.from(rig.state.q)).toEqual(q0);
    expect(rig.gate.isEnabled).toBe(false);
    expect(rig.gate.releaseReason).toMatch(/session started/);
    rig.release();
    rig.tick();
    expect(Array.from(rig.state.q)).toEqual(q0); // released: still nothing
    rig.hold([0, 0, 1, 0, 0, 0], 20);
    expect(rig.gate.isEnabled).toBe(true);
    expect(rig.state.q[1]).not.toBe(q0[1]);
  });

  it("after requireRelease (a device reconnected) a moving arm makes a controlled stop and needs a fresh press", () => {
    const rig = new Rig(arm6, gateConfig(arm6));
    const m = rig.jogFromRelease([0, 0, 1, 0, 0, 0], 300, 0.4);
    expect(rig.isAtRest()).toBe(false);
    rig.gate.requireRelease("the input device reconnected");
    let sawStop = false;
    const r = rig.runToRest(1000, () => {
      if (rig.gate.command.action === "stop") sawStop = true;
      rig.gate.setInput(true, "cartesian", "world", 0.4, [0, 0, 1, 0, 0, 0]); // still held
    });
    expect(sawStop).toBe(true);
    // Ramp of T = max(v/a, |q̇_i|/a_i) (derived); rest reached within it.
    expect(r.ticks * DT).toBeLessThanOrEqual(expectedStopTime(m, rig.cfg) + DT);
    rig.hold([0, 0, 1, 0, 0, 0], 100, 0.4);
    expect(rig.isAtRest()).toBe(true);
    expect(rig.gate.releaseReason).toMatch(/reconnected/);
    rig.release();
    rig.hold([0, 0, 1, 0, 0, 0], 20, 0.4);
    expect(rig.isAtRest()).toBe(false);
  });
});

describe("controlled stops ramp the achieved motion", () => {
  it("releasing at 100 mm/s stops within v/a and v²/2a (+ one tick), one factor for the whole q̇, on the path", () => {
    // +z at 0.4 × 250 mm/s = 0.1 m/s, a = 1 m/s² (default profile). Joint decelerations at the rated
    // 4 × maxSpeed (arm.ts default) so the TCP bound binds: T = v/a = 0.1 s, d = v²/2a = 5 mm (derived).
    const cfg = gateConfig(arm6, {}, 1);
    const rig = new Rig(arm6, cfg);
    const m = rig.jogFromRelease([0, 0, 1, 0, 0, 0], 300, 0.4);
    expect(m.lin).toBeCloseTo(0.1, 6);
    const T = expectedStopTime(m, cfg);
    expect(T).toBeCloseTo(m.lin / cfg.linearAccel, 12); // the TCP deceleration binds
    const q0dot = m.qdot;
    const start = rig.tcp;
    rig.release();
    let maxParallelError = 0, maxJointDecelRatio = 0, maxLateral = 0;
    const r = rig.runToRest(2000, () => {
      const qd = rig.state.qdot;
      // q̇ = f·q̇0: the component of q̇ across q̇0 is zero (rounding only).
      const f = qd.reduce((s, v, i) => s + v * q0dot[i]!, 0) / q0dot.reduce((s, v) => s + v * v, 0);
      qd.forEach((v, i) => (maxParallelError = Math.max(maxParallelError, Math.abs(v - f * q0dot[i]!))));
      qd.forEach((v, i) => (maxJointDecelRatio = Math.max(maxJointDecelRatio, Math.abs(v - rig.qdotBefore[i]!) / DT / (cfg.jointAccel[i] as number))));
      maxLateral = Math.max(maxLateral, Math.hypot(rig.tcp[0]! - start[0]!, rig.tcp[1]! - start[1]!));
    });
    expect(r.ticks * DT).toBeLessThanOrEqual(T + DT);
    expect(r.distance).toBeLessThanOrEqual((m.lin * m.lin) / (2 * cfg.linearAccel) + m.lin * DT);
    // …and not much shorter either: it decelerates at a, not harder (one tick of slack, derived).
    expect(r.distance).toBeGreaterThanOrEqual((m.lin * m.lin) / (2 * cfg.linearAccel) - m.lin * DT);
    expect(maxParallelError).toBeLessThan(1e-12);
    expect(maxJointDecelRatio).toBeLessThanOrEqual(1 + 1e-9);
    // Path kept: the joint-space ramp leaves the +z line by a second-order amount only; 0.05 mm over a
    // 5 mm stop (derived bound, measured ~1e-3 mm).
    expect(maxLateral).toBeLessThan(5e-5);
    // The gate's own measurement and prediction agree with ours.
    expect(rig.gate.lastStop.kind).toBe("enabling-released");
    expect(rig.gate.lastStop.time).toBeCloseTo(r.ticks * DT, 9);
    expect(rig.gate.lastStop.distance).toBeCloseTo(r.distance, 5);
    expect(rig.gate.lastStop.predictedTime).toBeCloseTo(T, 9);
    expect(rig.gate.lastStop.predictedDistance).toBeCloseTo((m.lin * T) / 2, 9);
  });

  it("issue 8 finding: full stick on x+y+z, then release — no longer 434 ms and 30.1 mm, but the computed stop", () => {
    // The review: six-axis demo arm, 500 Hz, default profile, 100 % override, full stick on x, y and z for
    // 2 s (joint 3 at its cap, TCP at 106 mm/s). The old ramp started from the commanded twist
    // (√3 × 250 mm/s) and took 434 ms and 30.1 mm (reproduced on the old server simulation; v²/2a would be
    // 5.6 mm). Now: T = max(v/a, |q̇_i|/a_i) with a_i = 50 % of 4 × maxSpeed (profile default, arm default),
    // d ≤ v·T/2 (+ one tick) (derived).
    const cfg = gateConfig(arm6);
    const rig = new Rig(arm6, cfg);
    const m = rig.jogFromRelease([1, 1, 1, 0, 0, 0], 1000, 1);
    expect(m.lin).toBeGreaterThan(0.05); // still moving briskly at the release
    const T = expectedStopTime(m, cfg);
    rig.release();
    const r = rig.runToRest();
    expect(r.ticks * DT).toBeLessThanOrEqual(T + DT);
    expect(r.distance).toBeLessThanOrEqual((m.lin * T) / 2 + m.lin * DT);
    // Against the old figures: well under the 434 ms and 30.1 mm.
    expect(r.ticks * DT).toBeLessThan(0.3);
    expect(r.distance).toBeLessThan(0.015);
  });

  it("centring the stick while a cap binds slows down from the achieved speed, not from the wound-up command", () => {
    // Same motion as the finding, but the stick goes back to zero with the control still held: the slew
    // starts from what the capped step achieved (anti-windup, derived), so the arm comes to rest within
    // the controlled-stop time of that motion (plus the slew's last tick), not in (433 − 0)/1000 s.
    // Joint caps at 10 % of rated (instead of 50 %) so a joint cap binds on a plain +z move at 250 mm/s.
    const cfg = gateConfig(arm6, { jointRateCaps: arm6.model.joints.map((j) => 0.1 * j.maxSpeed!) });
    const rig = new Rig(arm6, cfg);
    const m = rig.jogFromRelease([0, 0, 1, 0, 0, 0], 500, 1);
    expect(rig.report.binding).toBe("joint-rate");
    expect(m.lin).toBeLessThan(0.2); // achieved well under the 250 mm/s asked for: the command is wound up
    let ticks = 0;
    for (; ticks < 2000 && !rig.isAtRest(); ticks++) rig.hold(ZERO6, 1, 1);
    expect(ticks * DT).toBeLessThanOrEqual(expectedStopTime(m, cfg) + 2 * DT);
  });

  it("the watchdog stops within the watchdog time plus the ramp, and then needs a release and a fresh press", () => {
    // Watchdog 200 ms = 100 ticks at 500 Hz (profile default); the arm keeps its speed for the wait, then
    // ramps: time ≤ Tw + T (+ one tick), distance ≤ v·Tw + v·T/2 (+ one tick) (derived).
    const cfg = gateConfig(arm6);
    const rig = new Rig(arm6, cfg);
    const m = rig.jogFromRelease([0, 0, 1, 0, 0, 0], 300, 0.4);
    const T = expectedStopTime(m, cfg);
    rig.gate.setInput(true, "cartesian", "world", 0.4, [0, 0, 1, 0, 0, 0]); // the last input, then silence
    let tripTick = -1;
    let ticks = 0;
    const r = rig.runToRest(2000, () => {
      ticks++;
      if (tripTick < 0 && rig.gate.isWatchdogTripped) tripTick = ticks;
    });
    expect(tripTick).toBe(rig.gate.watchdogTicks + 1); // 100 ticks of motion, then the first ramp tick
    expect(r.ticks * DT).toBeLessThanOrEqual(0.2 + T + DT);
    expect(r.distance).toBeLessThanOrEqual(m.lin * 0.2 + (m.lin * T) / 2 + m.lin * DT);
    expect(rig.gate.lastStop.kind).toBe("watchdog");
    expect(rig.gate.lastStop.time).toBeCloseTo(r.ticks * DT, 9);
    expect(rig.gate.lastStop.predictedTime).toBeCloseTo(0.2 + T, 6);
    expect(rig.gate.reason).toBe("watchdog");
    // The stream comes back with the control held: nothing moves until a release and a press.
    rig.hold([0, 0, 1, 0, 0, 0], 100, 0.4);
    expect(rig.isAtRest()).toBe(true);
    rig.release();
    rig.tick();
    expect(rig.gate.reason).toBe("enabling-released");
    rig.hold([0, 0, 1, 0, 0, 0], 20, 0.4);
    expect(rig.isAtRest()).toBe(false);
  });

  it("excused ticks (a stalled server) do not count towards the watchdog; silence beyond them does", () => {
    const gate = new MotionGate(gateConfig(arm6));
    const still = { achievedTwist: ZERO6, jointCapScale: 1, tcpLinearScale: 1, tcpAngularScale: 1, limitScale: 1, binding: "none" as const, guardState: "off" as const };
    gate.setInput(false, "cartesian", "world", 1, ZERO6);
    gate.setInput(true, "cartesian", "world", 1, ZERO6);
    gate.excuseInputSilence(50);
    for (let k = 0; k < 150; k++) gate.tick(still, ZERO6);
    expect(gate.isWatchdogTripped).toBe(false); // 150 ticks − 50 excused = 100 = the watchdog, not above
    gate.tick(still, ZERO6);
    expect(gate.isWatchdogTripped).toBe(true);
  });
});

describe("the emergency stop (instant halt in the simulation)", () => {
  it("latches, survives held and released inputs, and its reset never restarts motion", () => {
    const rig = new Rig(arm6, gateConfig(arm6));
    rig.release();
    rig.hold([0, 0, 1, 0, 0, 0], 200, 0.4);
    rig.gate.emergencyStop();
    rig.state.qdot.fill(0); // the caller's instant halt
    rig.report.achievedTwist.fill(0);
    expect(rig.gate.lastStop).toMatchObject({ kind: "instant-halt", time: 0, distance: 0 });
    const q = Array.from(rig.state.q);
    rig.hold([0, 0, 1, 0, 0, 0], 100, 0.4);
    rig.release();
    rig.hold([0, 0, 1, 0, 0, 0], 100, 0.4);
    expect(Array.from(rig.state.q)).toEqual(q);
    expect(rig.gate.reason).toBe("emergency-stop");
    expect(rig.gate.stopping).toMatchObject({ kind: "instant-halt", isActive: true });
    // Reset while the control is held: unlatched, still nothing moves.
    rig.gate.resetEstop();
    rig.hold([0, 0, 1, 0, 0, 0], 100, 0.4);
    expect(Array.from(rig.state.q)).toEqual(q);
    expect(rig.gate.isEstopLatched).toBe(false);
    expect(rig.gate.isEnabled).toBe(false);
    // Release, press: moves.
    rig.release();
    rig.hold([0, 0, 1, 0, 0, 0], 20, 0.4);
    expect(rig.isAtRest()).toBe(false);
  });

  it("a reset while the control is known released does not move the arm either: motion needs a press", () => {
    const rig = new Rig(arm6, gateConfig(arm6));
    rig.release();
    rig.gate.emergencyStop();
    rig.release();
    rig.gate.resetEstop();
    for (let k = 0; k < 100; k++) rig.tick();
    expect(rig.isAtRest()).toBe(true);
    rig.hold([0, 0, 1, 0, 0, 0], 20, 0.4);
    expect(rig.isAtRest()).toBe(false);
  });

  it("a gate started latched (the station's latch) passes no motion until reset, release and press", () => {
    const rig = new Rig(arm6, gateConfig(arm6, { estopLatched: true }));
    rig.release();
    rig.hold([0, 0, 1, 0, 0, 0], 200, 0.4);
    expect(rig.isAtRest()).toBe(true);
    expect(rig.gate.reason).toBe("emergency-stop");
    rig.gate.resetEstop(); // the control is held: not armed
    rig.hold([0, 0, 1, 0, 0, 0], 50, 0.4);
    expect(rig.isAtRest()).toBe(true);
    rig.release();
    rig.hold([0, 0, 1, 0, 0, 0], 20, 0.4);
    expect(rig.isAtRest()).toBe(false);
  });
});

describe("input shaping and slew", () => {
  const still = { achievedTwist: ZERO6, jointCapScale: 1, tcpLinearScale: 1, tcpAngularScale: 1, limitScale: 1, binding: "none" as const, guardState: "off" as const };

  it("clamps the override to the profile maximum and the linear command to cap·override, slewing at a·dt", () => {
    const gate = new MotionGate(gateConfig(arm6, { maxOverride: 0.8, deadband: 0.1, expo: 0.3 }));
    gate.setInput(false, "cartesian", "world", 1, ZERO6);
    gate.setInput(true, "cartesian", "world", 1.5, [1, 1, 1, 0, 0, 0]);
    expect(gate.override).toBe(0.8);
    const c = gate.tick(still, ZERO6);
    // One tick: |Δv| = a·dt = 1 m/s² × 2 ms = 2 mm/s along (1, 1, 1)/√3 (derived).
    expect(Math.hypot(c.twist[0]!, c.twist[1]!, c.twist[2]!)).toBeCloseTo(0.002, 12);
    for (let k = 0; k < 500; k++) {
      if (k % 5 === 0) gate.setInput(true, "cartesian", "world", 1.5, [1, 1, 1, 0, 0, 0]);
      gate.tick(still, ZERO6);
    }
    // Full stick on three axes: the norm is cap × override = 0.25 × 0.8 = 0.2 m/s, not √3 × that (derived).
    expect(Math.hypot(c.twist[0]!, c.twist[1]!, c.twist[2]!)).toBeCloseTo(0.2, 12);
    expect(c.twist[0]).toBeCloseTo(c.twist[2]!, 12);
    // Deadband 0.1 with rescaling, then expo 0.3: 0.55 → 0.5 → 0.35 + 0.0375 = 0.3875 (derived).
    for (let k = 0; k < 500; k++) {
      if (k % 5 === 0) gate.setInput(true, "cartesian", "world", 1, [0, 0, 0.55, 0, 0, 0]);
      gate.tick(still, ZERO6);
    }
    expect(c.twist[2]).toBeCloseTo(0.3875 * 0.25 * 0.8, 12);
  });

  it("slews a joint-jog command by one factor for the whole vector, within each joint's acceleration", () => {
    const cfg = gateConfig(arm6);
    const gate = new MotionGate(cfg);
    gate.setInput(false, "joint", "world", 1, ZERO6);
    gate.setInput(true, "joint", "world", 1, [1, -1, 0, 0, 0, 0.5]);
    const c = gate.tick(still, ZERO6);
    expect(c.action).toBe("joint");
    // Targets 0.5·maxSpeed (times the stick); the binding joint moves a_i·dt; all keep the target's direction.
    const target = [1, -1, 0, 0, 0, 0.5].map((x, i) => x * (cfg.jointRateCaps[i] as number));
    const f = c.jointRates[0]! / target[0]!;
    target.forEach((t, i) => expect(c.jointRates[i]).toBeCloseTo(f * t, 12));
    const ratios = target.map((t, i) => Math.abs(f * t) / ((cfg.jointAccel[i] as number) * DT));
    expect(Math.max(...ratios)).toBeCloseTo(1, 12);
  });

  it("changes mode only through a zero command", () => {
    const rig = new Rig(arm6, gateConfig(arm6));
    rig.release();
    rig.hold([0, 0, 1, 0, 0, 0], 200, 0.4);
    const actions: string[] = [];
    for (let k = 0; k < 200; k++) {
      if (k % 5 === 0) rig.gate.setInput(true, "joint", "world", 0.4, [0.5, 0, 0, 0, 0, 0]);
      rig.tick();
      actions.push(rig.gate.command.action);
    }
    const firstJoint = actions.indexOf("joint");
    expect(firstJoint).toBeGreaterThan(0);
    expect(actions.slice(0, firstJoint).every((a) => a === "cartesian" || a === "hold")).toBe(true);
    expect(actions[firstJoint - 1]).toBe("hold"); // the Cartesian command reached zero first
    // 0.1 m/s at 1 m/s² ramps down in 0.1 s = 50 ticks (derived).
    expect(firstJoint).toBe(50);
  });
});

describe("stopping predictions", () => {
  it("are zero at rest, the ramp time while moving, include the watchdog wait, and instant halt is zero", () => {
    const cfg = gateConfig(arm6);
    const rig = new Rig(arm6, cfg);
    rig.release();
    rig.tick();
    const p = rig.gate.predictions;
    expect(p["enabling-released"]).toEqual({ time: 0, distance: 0 });
    rig.hold([0, 0, 1, 0, 0, 0], 300, 0.4);
    const m = rig.motion();
    const T = expectedStopTime(m, cfg);
    rig.gate.updatePredictions(rig.report, rig.state.qdot);
    expect(p["enabling-released"].time).toBeCloseTo(T, 12);
    expect(p["enabling-released"].distance).toBeCloseTo((m.lin * T) / 2, 12);
    expect(p.watchdog.time).toBeCloseTo(0.2 + T, 12);
    expect(p.watchdog.distance).toBeCloseTo(m.lin * 0.2 + (m.lin * T) / 2, 12);
    // The guard decelerates within the joint limits only: max |q̇_i|/a_i.
    const Tg = Math.max(...m.qdot.map((v, i) => Math.abs(v) / (cfg.jointAccel[i] as number)));
    expect(p["singularity-guard"].time).toBeCloseTo(Tg, 12);
    expect(p["instant-halt"]).toEqual({ time: 0, distance: 0 });
    expect(rig.gate.stopping).toMatchObject({ kind: "enabling-released", isActive: false });
    // While stopping: the active stop's remaining time shrinks tick by tick.
    rig.release();
    rig.tick();
    rig.gate.updatePredictions(rig.report, rig.state.qdot);
    expect(rig.gate.stopping.isActive).toBe(true);
    expect(rig.gate.stopping.time).toBeCloseTo(T - DT, 12);
  });

  it("the gate refuses a configuration it could not honour, naming the field", () => {
    expect(() => new MotionGate(gateConfig(arm6, { linearAccel: 0 }))).toThrow(/linearAccel/);
    expect(() => new MotionGate(gateConfig(arm6, { tcpLinearCap: Infinity }))).toThrow(/tcpLinearCap/);
    expect(() => new MotionGate(gateConfig(arm6, { jointAccel: [1, 1, 1] }))).toThrow(/jointAccel/);
    expect(() => new MotionGate(gateConfig(arm6, { maxOverride: 1.2 }))).toThrow(/maxOverride/);
    // An unlimited joint acceleration is allowed (Infinity: none).
    expect(() => new MotionGate(gateConfig(arm6, { jointAccel: new Array(6).fill(Infinity) }))).not.toThrow();
  });

  it("controlledStopTime takes the longest of the TCP and joint bounds; an unlimited joint does not bind", () => {
    // 0.2 m/s at 1 m/s² → 0.2 s; 1 rad/s at 4 rad/s² → 0.25 s; joint 2 at 3 rad/s / 10 → 0.3 s (derived).
    expect(controlledStopTime(0.2, 1, [0, 3], 2, 1, 4, [Infinity, 10])).toBeCloseTo(0.3, 15);
    expect(controlledStopTime(0.2, 1, [5, 0], 2, 1, 4, [Infinity, 10])).toBeCloseTo(0.25, 15);
    expect(controlledStopTime(Number.NaN, 0, [0], 1, 1, 1, [1])).toBe(Infinity);
  });
});
