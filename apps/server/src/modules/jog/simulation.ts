import {
  controlStep, createControlReport, createControlState, createControlWorkspace, forwardPoseInto, jointJogStep,
  setJointPositions,
  type ArmModel, type ControlParams, type ControlState, type ControlStepReport, type ControlWorkspace,
} from "@jogwright/kinematics";
import type { JogInput, ProfileParams, StopReason } from "@jogwright/shared";
import { toControlParams } from "./params.ts";
import { shapeAxis, slewVector3 } from "./shaping.ts";

/**
 * One jog session's simulated arm: input shaping and gating (PRODUCT.md "The control step", steps 1–2)
 * around the kinematics engine's control step (steps 3–8). Lives on the simulation thread (sim-worker.ts).
 * SI units inside (m, rad, s); times from the scheduler in ms (that thread's performance.now clock). The tick path (tick) does not allocate: every buffer is made
 * here once; the JSON frame is built only at frame rate (frameJson).
 *
 * Gating rules (ISO 13850:2015 principle, from memory; METHODS.md §7):
 * - motion needs the enabling control held AND armed; after a watchdog stop and after an e-stop (and its
 *   reset) it is re-armed only by an input with the control released, so the operator must release and
 *   press again (a reset alone never restarts motion);
 * - enabling released or watchdog → the commanded twist ramps to zero at the profile's acceleration
 *   limits (controlled stop);
 * - emergency stop → joint rates zero at once (when the simulation thread receives it: the main thread wakes
 *   it for it, so not at the next tick), latched until a deliberate reset-estop.
 */

const MAX_AXES = 12;

export interface SimulationSetup {
  arm: ArmModel;
  readyPose: readonly number[];
  params: ProfileParams;
  /** Start here instead of the ready pose (e.g. when switching versions on the same arm). */
  q0?: ArrayLike<number>;
}

export type InputResult = { ok: true } | { ok: false; code: string; message: string };

const INPUT_OK: InputResult = { ok: true };

/** A Cartesian input needs 6 axes, a joint input one per joint (checked on the main thread and again here). */
export function checkInputAxes(input: JogInput, jointCount: number): InputResult {
  const expected = input.mode === "cartesian" ? 6 : jointCount;
  if (input.axes.length === expected) return INPUT_OK;
  return {
    ok: false, code: "bad_axes",
    message: `${input.mode === "cartesian" ? "A Cartesian" : "A joint"} input needs ${expected} axes, got ${input.axes.length}.`,
  };
}

export interface SimulationSummary {
  durationS: number;
  frames: number;
  maxTcpSpeedMPerS: number;
  minSigma: number;
  maxJointRateFraction: number;
  stops: Record<string, number>;
}

export class JogSimulation {
  readonly n: number;
  readonly dt: number;
  readonly tickRateHz: number;
  readonly profile: ProfileParams;
  readonly readyPose: Float64Array;
  private readonly ws: ControlWorkspace;
  readonly state: ControlState;
  readonly report: ControlStepReport;
  private readonly worldParams: ControlParams;
  private readonly toolParams: ControlParams;
  /** Used while holding still: zero twist, no drift correction (so a hold never moves the arm). */
  private readonly holdParams: ControlParams;
  /** Effective joint caps (profile cap and arm maxSpeed, the smaller), rad/s or m/s. */
  readonly jointCaps: Float64Array;
  private readonly jointAccel: Float64Array;
  private readonly zeroTwist = new Float64Array(6);
  private readonly poseScratch = new Float64Array(16);
  private readonly zeroJoints: Float64Array;

  // Latest input (raw, validated).
  private readonly rawAxes = new Float64Array(MAX_AXES);
  private inputMode: "cartesian" | "joint" = "cartesian";
  private inputFrame: "world" | "tool" = "world";
  overridePercent: number;
  private isEnablingHeld = false;
  /**
   * Armed at session start (starting a session is itself a deliberate command, and a client that sends
   * inputs only while something is held must be able to move with its first press); disarmed by a watchdog
   * stop and an e-stop, re-armed by an input with the enabling control released.
   */
  private isEnableArmed = true;
  private lastInputAtMs = -Infinity;
  /** The scheduler's stall total as of the latest tick, and as of the last input (see tick). */
  private stalledMs = 0;
  private stalledAtInputMs = 0;
  lastInputSeq = -1;
  lastInputClientTimeMs = 0;

  // Command after shaping, gating and slew limits.
  private readonly target = new Float64Array(MAX_AXES);
  private readonly cmdTwist = new Float64Array(6);
  private readonly cmdJoints: Float64Array;
  private cmdMode: "cartesian" | "joint" = "cartesian";
  private cmdFrame: "world" | "tool" = "world";
  private isCommandZero = true;
  private isMeasuredAtRest = false;

  isEnabled = false;
  isEstopLatched = false;
  private isWatchdogTripped = false;
  stopReason: StopReason = "enabling-released";
  private lastFault: string = "none";
  private faultTicks = 0;
  /** Ticks skipped because the scheduler fell too far behind (overruns). */
  overrunTicks = 0;
  droppedInputs = 0;
  private lastOverrunWarnAtTick = -Infinity;
  private lastDropWarnAtTick = -Infinity;

  ticks = 0;
  // Summary statistics for the recording.
  frames = 0;
  private maxTcpSpeed = 0;
  private minSigma = Infinity;
  private maxJointRateFraction = 0;
  private readonly stopCounts: Record<string, number> = {};

  constructor(setup: SimulationSetup) {
    const { arm, params } = setup;
    this.profile = params;
    this.ws = createControlWorkspace(arm);
    this.n = this.ws.n;
    this.readyPose = Float64Array.from(setup.readyPose);
    this.state = createControlState(arm, setup.q0 ?? setup.readyPose);
    this.report = createControlReport();
    this.tickRateHz = params.tickRateHz;
    this.dt = 1 / params.tickRateHz;
    this.worldParams = toControlParams(params, this.n);
    this.toolParams = { ...this.worldParams, twistFrame: "tool" };
    this.holdParams = { ...this.worldParams, driftCorrection: null };
    this.overridePercent = Math.min(params.speedOverride.defaultPercent, params.speedOverride.maxPercent);
    this.jointCaps = new Float64Array(this.n);
    this.jointAccel = new Float64Array(this.n);
    this.cmdJoints = new Float64Array(this.n);
    this.zeroJoints = new Float64Array(this.n);
    for (let i = 0; i < this.n; i++) {
      const j = arm.joints[i]!;
      const cap = params.jointRateCapsRadPerS[i] ?? Infinity;
      this.jointCaps[i] = Math.min(cap, j.maxSpeed ?? Infinity);
      // Joint jog ramps with the angular limit (linear for a prismatic joint): the profile has no
      // per-joint acceleration, so the Cartesian limits stand in (our choice, documented).
      this.jointAccel[i] = j.type === "prismatic" ? params.shaping.linearAccelMPerS2 : params.shaping.angularAccelRadPerS2;
    }
    this.hold();
  }

  get watchdogMs(): number {
    return this.profile.watchdogMs;
  }

  /** Seconds simulated since the session started. */
  get time(): number {
    return this.ticks * this.dt;
  }

  /** A validated input frame arrived at nowMs (performance.now). */
  applyInput(input: JogInput, nowMs: number): InputResult {
    const checked = checkInputAxes(input, this.n);
    if (!checked.ok) return checked;
    this.applyInputValues(
      input.seq, input.clientTimeMs, input.enabling, input.mode, input.frame, input.overridePercent, input.axes, 0, nowMs,
    );
    return INPUT_OK;
  }

  /**
   * applyInput from plain values, the axes at axes[axesOffset…] (the simulation thread decodes inputs from
   * a Float64Array batch, sim-messages.ts, without allocating). The axis count is checked by the caller.
   */
  applyInputValues(
    seq: number, clientTimeMs: number, isEnabling: boolean, mode: "cartesian" | "joint", frame: "world" | "tool",
    overridePercent: number, axes: ArrayLike<number>, axesOffset: number, nowMs: number,
  ): void {
    const expected = mode === "cartesian" ? 6 : this.n;
    for (let i = 0; i < MAX_AXES; i++) this.rawAxes[i] = i < expected ? axes[axesOffset + i]! : 0;
    this.inputMode = mode;
    this.inputFrame = frame;
    this.overridePercent = Math.min(overridePercent, this.profile.speedOverride.maxPercent);
    if (!isEnabling) {
      // Released: re-arms the enabling control (ISO 13850 principle: motion needs a fresh press).
      this.isEnableArmed = true;
      this.isWatchdogTripped = false;
    }
    this.isEnablingHeld = isEnabling;
    this.lastInputAtMs = nowMs;
    this.stalledAtInputMs = this.stalledMs;
    this.lastInputSeq = seq;
    this.lastInputClientTimeMs = clientTimeMs;
  }

  /** Emergency stop: joint rates zero at once, the command cleared, latched until resetEstop. */
  emergencyStop(): void {
    this.isEstopLatched = true;
    this.isEnableArmed = false;
    this.isEnabled = false;
    this.cmdTwist.fill(0);
    this.cmdJoints.fill(0);
    this.isCommandZero = true;
    this.state.qdot.fill(0);
    this.report.achievedTwist.fill(0);
    this.report.tcpLinearSpeed = 0;
    this.report.tcpAngularSpeed = 0;
    this.setStopReason("emergency-stop");
  }

  /** Clears the latch; never moves the arm and never restarts motion (a fresh enabling press is needed). */
  resetEstop(): void {
    this.isEstopLatched = false;
    this.isEnableArmed = false;
  }

  acknowledge(): void {
    this.state.singularityAcknowledged = true;
  }

  /** True when nothing moves and nothing is commanded (the ready-pose reset is allowed only then). */
  get isStopped(): boolean {
    if (this.isEnabled || !this.isCommandZero) return false;
    for (let i = 0; i < this.n; i++) if (this.state.qdot[i] !== 0) return false;
    return true;
  }

  /** Puts the simulated arm back at the ready pose. Caller checks isStopped and the e-stop latch. */
  moveToReadyPose(): void {
    setJointPositions(this.ws, this.state, this.readyPose);
    this.state.singularityAcknowledged = false;
    this.isMeasuredAtRest = false;
    this.hold();
  }

  noteDroppedInput(): boolean {
    this.droppedInputs++;
    // Tell the client at most once a second.
    if (this.ticks - this.lastDropWarnAtTick >= this.tickRateHz) {
      this.lastDropWarnAtTick = this.ticks;
      return true;
    }
    return false;
  }

  noteOverrun(skipped: number): void {
    this.overrunTicks += skipped;
    this.lastOverrunWarnAtTick = this.ticks;
  }

  private setStopReason(reason: StopReason): void {
    if (reason !== this.stopReason) {
      if (reason !== "none") this.stopCounts[reason] = (this.stopCounts[reason] ?? 0) + 1;
      this.stopReason = reason;
    }
  }

  /**
   * One control tick at wall time nowMs. No allocation. stalledMs is the scheduler's running total of
   * process stalls: the watchdog counts silence without them, so a pause of the server itself (inputs
   * queued unread in the socket) is not taken for a silent client; a truly silent client still trips it
   * on time, or late by the stall, when nothing could have moved anyway.
   */
  tick(nowMs: number, stalledMs = 0): void {
    const p = this.profile;
    const dt = this.dt;
    this.stalledMs = stalledMs;
    // Step 2, gating.
    const silenceMs = nowMs - this.lastInputAtMs - (stalledMs - this.stalledAtInputMs);
    if (this.isEnablingHeld && silenceMs > p.watchdogMs) {
      // Silence while the enabling control was last seen held: treat it as released, and it must be
      // released and pressed again before motion resumes.
      this.isWatchdogTripped = true;
      this.isEnablingHeld = false;
      this.isEnableArmed = false;
    }
    this.isEnabled = this.isEnablingHeld && this.isEnableArmed && !this.isEstopLatched;

    if (this.isEstopLatched) {
      this.state.qdot.fill(0);
      this.hold();
      this.finishTick();
      return;
    }

    // Step 1, shaping: deadband, expo, caps·override → target; a mode or frame change first ramps the
    // running command to zero, then switches.
    const target = this.target;
    target.fill(0);
    const switching = this.inputMode !== this.cmdMode || (this.inputMode === "cartesian" && this.inputFrame !== this.cmdFrame);
    if (switching && this.isCommandZero) {
      this.cmdMode = this.inputMode;
      this.cmdFrame = this.inputFrame;
    }
    const override = this.overridePercent / 100;
    if (this.isEnabled && this.inputMode === this.cmdMode && (this.cmdMode === "joint" || this.inputFrame === this.cmdFrame)) {
      const db = p.shaping.deadband;
      const ex = p.shaping.expo;
      if (this.cmdMode === "cartesian") {
        for (let i = 0; i < 3; i++) target[i] = shapeAxis(this.rawAxes[i]!, db, ex) * p.tcpLinearCapMPerS * override;
        for (let i = 3; i < 6; i++) target[i] = shapeAxis(this.rawAxes[i]!, db, ex) * p.tcpAngularCapRadPerS * override;
      } else {
        for (let i = 0; i < this.n; i++) target[i] = shapeAxis(this.rawAxes[i]!, db, ex) * this.jointCaps[i]! * override;
      }
    }
    // Slew (acceleration) limits; with a zero target this is the controlled-stop ramp.
    let zero = true;
    if (this.cmdMode === "cartesian") {
      slewVector3(this.cmdTwist, target, 0, p.shaping.linearAccelMPerS2 * dt);
      slewVector3(this.cmdTwist, target, 3, p.shaping.angularAccelRadPerS2 * dt);
      for (let i = 0; i < 6; i++) if (this.cmdTwist[i] !== 0) zero = false;
    } else {
      for (let i = 0; i < this.n; i++) {
        const max = this.jointAccel[i]! * dt;
        const d = target[i]! - this.cmdJoints[i]!;
        this.cmdJoints[i] = d > max ? this.cmdJoints[i]! + max : d < -max ? this.cmdJoints[i]! - max : target[i]!;
        if (this.cmdJoints[i] !== 0) zero = false;
      }
    }
    this.isCommandZero = zero;

    if (zero) {
      this.hold();
    } else {
      this.isMeasuredAtRest = false;
      if (this.cmdMode === "cartesian") {
        controlStep(this.ws, this.state, this.cmdFrame === "tool" ? this.toolParams : this.worldParams, this.cmdTwist, dt, this.report);
      } else {
        jointJogStep(this.ws, this.state, this.worldParams, this.cmdJoints, dt, this.report);
      }
      if (this.report.fault !== "none") {
        // The engine zeroed qdot and left q; drop the command so the next motion starts from rest.
        this.lastFault = this.report.fault;
        this.faultTicks++;
        this.cmdTwist.fill(0);
        this.cmdJoints.fill(0);
        this.isCommandZero = true;
      }
    }
    this.finishTick();
  }

  /** Holds still: qdot = 0; measures σ, pose once per rest (a zero-twist step without drift correction). */
  private hold(): void {
    if (!this.isMeasuredAtRest) {
      controlStep(this.ws, this.state, this.holdParams, this.zeroTwist, this.dt, this.report);
      this.isMeasuredAtRest = this.report.fault === "none";
    }
    this.state.qdot.fill(0);
    this.report.achievedTwist.fill(0);
    this.report.commandedTwist.fill(0);
    this.report.tcpLinearSpeed = 0;
    this.report.tcpAngularSpeed = 0;
  }

  private finishTick(): void {
    this.ticks++;
    const r = this.report;
    this.setStopReason(
      this.isEstopLatched ? "emergency-stop"
        : this.isWatchdogTripped ? "watchdog"
          : !this.isEnabled ? "enabling-released"
            : r.binding === "singularity-guard" ? "singularity-guard"
              : "none",
    );
    if (r.tcpLinearSpeed > this.maxTcpSpeed) this.maxTcpSpeed = r.tcpLinearSpeed;
    if (r.sigmaMin < this.minSigma) this.minSigma = r.sigmaMin;
    const qd = this.state.qdot;
    for (let i = 0; i < this.n; i++) {
      const c = this.jointCaps[i]!;
      const f = c > 0 && c < Infinity ? Math.abs(qd[i]!) / c : 0;
      if (f > this.maxJointRateFraction) this.maxJointRateFraction = f;
    }
  }

  /** The TCP pose at the current q (the report's pose is where the last step started); frame rate only. */
  private currentPose(out: number[]): void {
    forwardPoseInto(this.ws.kernel, this.state.q, this.poseScratch);
    for (let i = 0; i < 16; i++) out[i] = this.poseScratch[i]!;
  }

  private warnings(): string[] {
    const w: string[] = [];
    const r = this.report;
    if (this.isEstopLatched) w.push("Emergency stop latched: reset it, then release and press the enabling control to move.");
    else if (this.isEnablingHeld && !this.isEnableArmed) w.push("Release and press the enabling control again to move.");
    if (this.isWatchdogTripped) w.push(`No input for more than ${this.profile.watchdogMs} ms: controlled stop.`);
    if (r.guardState === "stopped") w.push("Stopped before the singular region: acknowledge to pass through, or move away.");
    if (r.lambda > 0) w.push("Near a singularity: damping is in effect.");
    if (r.binding === "joint-limit" && r.bindingJoint >= 0) w.push(`Joint ${r.bindingJoint + 1} is close to its limit.`);
    if (this.lastFault !== "none") {
      w.push(`Numerical fault (${this.lastFault}): joint rates were zeroed.`);
      this.lastFault = "none";
    }
    if (this.ticks - this.lastOverrunWarnAtTick < this.tickRateHz) w.push("The simulation fell behind and skipped ticks.");
    if (this.ticks - this.lastDropWarnAtTick < this.tickRateHz) w.push("Inputs above 120 Hz are dropped.");
    return w;
  }

  /**
   * The recorded part of a state frame (recordedFrameSchema) as a JSON object body without braces, built
   * at frame rate only. Non-finite numbers cannot occur (the engine zeroes them), but are sent as 0 so a
   * frame is always valid.
   */
  frameBody(): string {
    this.frames++;
    const r = this.report;
    const pose: number[] = new Array(16);
    this.currentPose(pose);
    const body = {
      t: this.time,
      q: finiteArray(this.state.q),
      qdot: finiteArray(this.state.qdot),
      pose: pose.map(fin),
      twistCommanded: finiteArray(r.commandedTwist),
      twistAchieved: finiteArray(r.achievedTwist),
      sigmaMin: fin(r.sigmaMin),
      manipulability: fin(r.manipulability),
      lambda: fin(r.lambda),
      scales: {
        jointRate: fin(r.jointCapScale), tcpLinear: fin(r.tcpLinearScale),
        tcpAngular: fin(r.tcpAngularScale), jointLimit: fin(r.limitScale),
      },
      binding: r.binding,
      bindingJoint: r.bindingJoint,
      guardState: r.guardState,
      enabled: this.isEnabled,
      estopLatched: this.isEstopLatched,
      stopReason: this.stopReason,
      overridePercent: this.overridePercent,
      warnings: this.warnings(),
    };
    const json = JSON.stringify(body);
    return json.slice(1, -1);
  }

  /** Marks the end (stop reason "session-ended") for the last frame. */
  end(): void {
    this.cmdTwist.fill(0);
    this.cmdJoints.fill(0);
    this.state.qdot.fill(0);
    this.isEnabled = false;
    this.setStopReason("session-ended");
  }

  summary(): SimulationSummary {
    return {
      durationS: this.time,
      frames: this.frames,
      maxTcpSpeedMPerS: this.maxTcpSpeed,
      minSigma: Number.isFinite(this.minSigma) ? this.minSigma : 0,
      maxJointRateFraction: this.maxJointRateFraction,
      stops: { ...this.stopCounts },
    };
  }
}

function fin(v: number): number {
  return Number.isFinite(v) ? v : 0;
}

function finiteArray(a: ArrayLike<number>): number[] {
  const out = new Array<number>(a.length);
  for (let i = 0; i < a.length; i++) out[i] = fin(a[i]!);
  return out;
}
