import {
  MotionGate, STOP_KINDS, controlStep, createControlReport, createControlState, createControlWorkspace,
  forwardPoseInto, jointJogStep, setJointPositions,
  type ArmModel, type ControlParams, type ControlState, type ControlStepReport, type ControlWorkspace,
} from "@jogwright/kinematics";
import { INPUT_EVENT, type JogInput, type ProfileParams, type RecordingSummary, type StopReason } from "@jogwright/shared";
import { toControlParams } from "./params.ts";

/**
 * One jog session's simulated arm: the motion gate (packages/kinematics motion-gate.ts — shaping, enabling,
 * watchdog, emergency-stop latch, controlled stops; PRODUCT.md "The control step", steps 1–2) in front of
 * the kinematics engine's control step (steps 3–8), plus the state frames and the recording's summary.
 * Lives on the simulation thread (sim-worker.ts). SI units inside (m, rad, s). Time is the tick counter
 * (dt = 1/tickRateHz): the gate's watchdog counts ticks, so a tick the scheduler skipped is not silence.
 * The tick path (tick) does not allocate: every buffer is made here once; the JSON frame is built only
 * at frame rate (frameBody).
 *
 * The emergency stop is the simulation's "instant halt": joint rates zero at once (when the simulation
 * thread receives it — the main thread wakes it for it — not at the next tick), latched until a deliberate
 * reset. It is not an emergency-stop function: an on-screen or gamepad STOP is not an emergency-stop device
 * in the sense of ISO 13850, and a browser and a network path are never part of a safety function.
 */

export interface SimulationSetup {
  arm: ArmModel;
  readyPose: readonly number[];
  params: ProfileParams;
  /** Start here instead of the ready pose (e.g. when switching versions on the same arm). */
  q0?: ArrayLike<number>;
  /** Start with the emergency stop latched (the operator's station is latched; set by the hub). */
  estopLatched?: boolean;
  /** Log what acts on the simulation (INPUT_EVENT) for the recording; frameBody hands the log out. Live sessions only. */
  recordInputs?: boolean;
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

/** The recording's summary (recordingSummarySchema): SI, names with units. */
export type SimulationSummary = RecordingSummary;

type StopMeasure = SimulationSummary["stopsMeasured"][string];

export class JogSimulation {
  readonly n: number;
  readonly dt: number;
  readonly tickRateHz: number;
  readonly profile: ProfileParams;
  readonly readyPose: Float64Array;
  readonly gate: MotionGate;
  private readonly ws: ControlWorkspace;
  readonly state: ControlState;
  readonly report: ControlStepReport;
  private readonly worldParams: ControlParams;
  private readonly toolParams: ControlParams;
  /** Used while holding still: zero twist, no drift correction (so a hold never moves the arm). */
  private readonly holdParams: ControlParams;
  /** Effective joint caps (profile cap and arm maxSpeed, the smaller), rad/s or m/s. */
  readonly jointCaps: Float64Array;
  /** Joint acceleration limits (profile fraction of the rated value), rad/s² or m/s²: step and gate. */
  readonly jointAccel: Float64Array;
  private readonly zeroTwist = new Float64Array(6);
  private readonly poseScratch = new Float64Array(16);
  private isMeasuredAtRest = false;

  overridePercent: number;
  /** The scheduler's stall total as of the latest tick (see tick). */
  private stalledMs = 0;
  private readonly tickPeriodMs: number;
  lastInputSeq = -1;
  lastInputClientTimeMs = 0;
  /**
   * Set when an input changes the commanded motion (enabling, mode, frame, override or any axis), read and
   * cleared by the simulation thread after the next tick: it then sends a frame at once instead of at the
   * next frame slot (issue 11, "Input that feels instant"). A repeat of the same input changes nothing.
   */
  isCommandChanged = false;
  /** The last input's values, to tell a change from a repeat: [enabling, mode, frame, override, axes…]. */
  private readonly lastCommand = new Float64Array(4 + 12).fill(NaN);

  stopReason: StopReason;
  private lastFault: string = "none";
  private faultTicks = 0;
  /** Ticks skipped because the scheduler fell too far behind (overruns). */
  overrunTicks = 0;
  droppedInputs = 0;
  private lastOverrunWarnAtTick = -Infinity;
  private lastDropWarnAtTick = -Infinity;

  ticks = 0;
  // Joint accelerations from successive joint rates: q̇ of the previous tick, the peak since the last
  // frame and over the session (rad/s² or m/s²).
  private readonly qdotPrev: Float64Array;
  private readonly accelPeakFrame: Float64Array;
  private readonly accelPeakSession: Float64Array;
  // Summary statistics for the recording.
  frames = 0;
  private maxTcpSpeed = 0;
  private minSigma = Infinity;
  private maxJointRateFraction = 0;
  private readonly stopCounts: Record<string, number> = {};
  /** Per stop kind, made once (no allocation when a stop completes); only kinds that occurred are reported. */
  private readonly stopsMeasured: Record<string, StopMeasure> = Object.fromEntries(
    STOP_KINDS.map((kind) => [kind, { count: 0, maxTimeS: 0, maxDistanceM: 0, maxExcessDistanceM: 0 }]),
  );
  private stopsSeen = 0;
  /** Events since the last frame ([tick, kind, …values], INPUT_EVENT), or null when not recorded. */
  private inputEvents: number[][] | null;

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
    this.tickPeriodMs = 1000 / params.tickRateHz;
    this.worldParams = toControlParams(params, arm);
    this.toolParams = toControlParams(params, arm, { twistFrame: "tool" });
    this.holdParams = toControlParams(params, arm, { withDriftCorrection: false });
    this.overridePercent = Math.min(params.speedOverride.defaultPercent, params.speedOverride.maxPercent);
    this.jointCaps = new Float64Array(this.n);
    for (let i = 0; i < this.n; i++) {
      const cap = params.jointRateCapsRadPerS[i] ?? Infinity;
      this.jointCaps[i] = Math.min(cap, arm.joints[i]!.maxSpeed ?? Infinity);
    }
    this.jointAccel = Float64Array.from(this.worldParams.jointAccelLimits ?? new Float64Array(this.n).fill(Infinity));
    this.qdotPrev = new Float64Array(this.n);
    this.accelPeakFrame = new Float64Array(this.n);
    this.accelPeakSession = new Float64Array(this.n);
    this.gate = new MotionGate({
      jointCount: this.n,
      tickRateHz: params.tickRateHz,
      watchdog: params.watchdogMs / 1000,
      deadband: params.shaping.deadband,
      expo: params.shaping.expo,
      tcpLinearCap: params.tcpLinearCapMPerS,
      tcpAngularCap: params.tcpAngularCapRadPerS,
      jointRateCaps: this.jointCaps,
      maxOverride: params.speedOverride.maxPercent / 100,
      initialOverride: this.overridePercent / 100,
      linearAccel: params.shaping.linearAccelMPerS2,
      angularAccel: params.shaping.angularAccelRadPerS2,
      jointAccel: this.jointAccel,
      estopLatched: setup.estopLatched === true,
    });
    // The starting state is not a stop event: a latched start shows the latch without counting a stop.
    this.stopReason = setup.estopLatched ? "emergency-stop" : "enabling-released";
    this.inputEvents = setup.recordInputs ? [[0, INPUT_EVENT.start, setup.estopLatched ? 1 : 0, ...this.state.q]] : null;
    this.hold();
  }

  private logEvent(kind: number, ...values: number[]): void {
    this.inputEvents?.push([this.ticks, kind, ...values]);
  }

  get watchdogMs(): number {
    return this.profile.watchdogMs;
  }

  /** Seconds simulated since the session started. */
  get time(): number {
    return this.ticks * this.dt;
  }

  get isEnabled(): boolean {
    return this.gate.isEnabled;
  }

  get isEstopLatched(): boolean {
    return this.gate.isEstopLatched;
  }

  /** A validated input frame arrived (stamped by the gate with its tick counter). */
  applyInput(input: JogInput): InputResult {
    const checked = checkInputAxes(input, this.n);
    if (!checked.ok) return checked;
    this.applyInputValues(input.seq, input.clientTimeMs, input.enabling, input.mode, input.frame, input.overridePercent, input.axes, 0);
    return INPUT_OK;
  }

  /**
   * applyInput from plain values, the axes at axes[axesOffset…] (the simulation thread decodes inputs from
   * a Float64Array batch, sim-messages.ts, without allocating). The axis count is checked by the caller.
   */
  applyInputValues(
    seq: number, clientTimeMs: number, isEnabling: boolean, mode: "cartesian" | "joint", frame: "world" | "tool",
    overridePercent: number, axes: ArrayLike<number>, axesOffset: number,
  ): void {
    if (this.inputEvents) {
      const event = [this.ticks, INPUT_EVENT.input, seq, isEnabling ? 1 : 0, mode === "joint" ? 1 : 0, frame === "tool" ? 1 : 0, overridePercent];
      for (let i = axesOffset; i < axesOffset + (mode === "cartesian" ? 6 : this.n); i++) event.push(axes[i]!);
      this.inputEvents.push(event);
    }
    const c = this.lastCommand;
    const count = mode === "cartesian" ? 6 : this.n;
    let changed = c[0] !== (isEnabling ? 1 : 0) || c[1] !== (mode === "joint" ? 1 : 0) || c[2] !== (frame === "tool" ? 1 : 0) || c[3] !== overridePercent;
    for (let i = 0; i < count && !changed; i++) changed = c[4 + i] !== axes[axesOffset + i];
    if (changed) {
      c[0] = isEnabling ? 1 : 0;
      c[1] = mode === "joint" ? 1 : 0;
      c[2] = frame === "tool" ? 1 : 0;
      c[3] = overridePercent;
      for (let i = 0; i < count; i++) c[4 + i] = axes[axesOffset + i]!;
      this.isCommandChanged = true;
    }
    this.overridePercent = Math.min(overridePercent, this.profile.speedOverride.maxPercent);
    this.gate.setInput(isEnabling, mode, frame, this.overridePercent / 100, axes, axesOffset);
    this.lastInputSeq = seq;
    this.lastInputClientTimeMs = clientTimeMs;
  }

  /** Emergency stop: the instant halt (simulation) — joint rates zero at once — latched until resetEstop. */
  emergencyStop(): void {
    this.logEvent(INPUT_EVENT.estop);
    this.gate.emergencyStop();
    this.state.qdot.fill(0);
    this.qdotPrev.fill(0); // a step by definition: not counted as an acceleration
    this.report.achievedTwist.fill(0);
    this.report.tcpLinearSpeed = 0;
    this.report.tcpAngularSpeed = 0;
    this.isMeasuredAtRest = false;
    this.collectStops();
    this.setStopReason("emergency-stop");
  }

  /** Clears the latch; never moves the arm and never restarts motion (a fresh enabling press is needed). */
  resetEstop(): void {
    this.logEvent(INPUT_EVENT.resetEstop);
    this.gate.resetEstop();
  }

  /** Motion needs the enabling control seen released again (e.g. the input device reconnected). */
  requireRelease(reason: string): void {
    this.logEvent(INPUT_EVENT.requireRelease);
    this.gate.requireRelease(reason);
  }

  acknowledge(): void {
    this.logEvent(INPUT_EVENT.acknowledge);
    this.gate.acknowledge();
  }

  /** True when nothing moves and nothing is commanded (the ready-pose reset is allowed only then). */
  get isStopped(): boolean {
    const g = this.gate;
    if (g.isEnabled || g.isStopping || !g.isCommandZero) return false;
    for (let i = 0; i < this.n; i++) if (this.state.qdot[i] !== 0) return false;
    return true;
  }

  /** Nothing moves and no controlled stop is under way (whatever the stick says: the gate may hold it). */
  get isAtRest(): boolean {
    if (this.gate.isStopping) return false;
    for (let i = 0; i < this.n; i++) if (this.state.qdot[i] !== 0) return false;
    return true;
  }

  /** Puts the simulated arm back at the ready pose. Caller checks isStopped and the e-stop latch. */
  moveToReadyPose(): void {
    this.logEvent(INPUT_EVENT.readyPose);
    setJointPositions(this.ws, this.state, this.readyPose);
    this.state.singularityAcknowledged = false;
    this.state.isGuardHolding = false;
    this.isMeasuredAtRest = false;
    this.qdotPrev.fill(0);
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
   * One control tick. No allocation. stalledMs is the scheduler's running total of process stalls: the
   * ticks they account for are excused from the watchdog (inputs sat unread in the socket meanwhile), so a
   * pause of the server itself is not taken for a silent client; a truly silent client still trips it on
   * time, or late by the stall, when nothing could have moved anyway.
   */
  tick(stalledMs = 0): void {
    const dt = this.dt;
    if (stalledMs > this.stalledMs) {
      this.logEvent(INPUT_EVENT.stall, stalledMs);
      this.gate.excuseInputSilence((stalledMs - this.stalledMs) / this.tickPeriodMs);
    }
    this.stalledMs = stalledMs;

    const c = this.gate.tick(this.report, this.state.qdot);
    if (c.acknowledge) this.state.singularityAcknowledged = true;
    if (c.action === "hold") {
      this.hold();
    } else {
      this.isMeasuredAtRest = false;
      if (c.action === "cartesian") {
        controlStep(this.ws, this.state, c.frame === "tool" ? this.toolParams : this.worldParams, c.twist, dt, this.report);
      } else {
        // "joint" (joint jog) and "stop" (a controlled stop ramping the achieved joint rates).
        jointJogStep(this.ws, this.state, this.worldParams, c.jointRates, dt, this.report);
      }
      if (this.report.fault !== "none") {
        // The engine zeroed qdot and left q; the gate drops the command and wants a release and a press.
        this.lastFault = this.report.fault;
        this.faultTicks++;
        this.gate.noteFault();
        this.qdotPrev.fill(0); // the engine's zeroing is not an acceleration of the arm
      }
    }
    this.finishTick();
  }

  /** Holds still: qdot = 0; measures σ, pose once per rest (a zero-twist step without drift correction). */
  private hold(): void {
    // From rest: the step's acceleration limit starts from state.qdot, and a hold must never move the arm.
    this.state.qdot.fill(0);
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
    const reason = this.gate.reason;
    this.setStopReason(reason !== "none" ? reason : r.binding === "singularity-guard" ? "singularity-guard" : "none");
    if (r.tcpLinearSpeed > this.maxTcpSpeed) this.maxTcpSpeed = r.tcpLinearSpeed;
    if (r.sigmaMin < this.minSigma) this.minSigma = r.sigmaMin;
    const qd = this.state.qdot, prev = this.qdotPrev;
    const rate = this.tickRateHz;
    for (let i = 0; i < this.n; i++) {
      const v = qd[i]!;
      const c = this.jointCaps[i]!;
      const f = c > 0 && c < Infinity ? Math.abs(v) / c : 0;
      if (f > this.maxJointRateFraction) this.maxJointRateFraction = f;
      // |q̈_i| ≈ |q̇_i(k) − q̇_i(k−1)|/dt (backward difference, derived).
      const d = v - prev[i]!;
      const a = (d < 0 ? -d : d) * rate;
      if (a > this.accelPeakFrame[i]!) this.accelPeakFrame[i] = a;
      if (a > this.accelPeakSession[i]!) this.accelPeakSession[i] = a;
      prev[i] = v;
    }
    this.collectStops();
  }

  /** Adds the gate's newly completed stop (at most one per tick or e-stop) to the summary. */
  private collectStops(): void {
    const g = this.gate;
    if (g.completedStops === this.stopsSeen) return;
    this.stopsSeen = g.completedStops;
    const s = g.lastStop;
    const m = this.stopsMeasured[s.kind]!;
    m.count++;
    if (s.time > m.maxTimeS) m.maxTimeS = s.time;
    if (s.distance > m.maxDistanceM) m.maxDistanceM = s.distance;
    const excess = s.distance - s.predictedDistance;
    if (excess > m.maxExcessDistanceM) m.maxExcessDistanceM = excess;
  }

  /** The TCP pose at the current q (the report's pose is where the last step started); frame rate only. */
  private currentPose(out: number[]): void {
    forwardPoseInto(this.ws.kernel, this.state.q, this.poseScratch);
    for (let i = 0; i < 16; i++) out[i] = this.poseScratch[i]!;
  }

  private warnings(): string[] {
    const w: string[] = [];
    const r = this.report;
    const g = this.gate;
    if (g.isEstopLatched) w.push("Emergency stop latched: reset it, then release and press the enabling control to move.");
    else if (g.isEnablingHeld && !g.isArmed) {
      const why = g.releaseReason;
      w.push(`Release and press the enabling control again to move${why ? ` (${why})` : ""}.`);
    }
    if (g.isWatchdogTripped) w.push(`No input for more than ${this.profile.watchdogMs} ms: controlled stop.`);
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
    // Predictions from the motion of the step just taken.
    const stopping = this.gate.updatePredictions(r, this.state.qdot);
    const predictions = this.gate.predictions;
    const stopPredictions: Record<string, { timeS: number; distanceM: number }> = {};
    for (const kind of STOP_KINDS) stopPredictions[kind] = { timeS: fin(predictions[kind].time), distanceM: fin(predictions[kind].distance) };
    const jointAccelPeak = finiteArray(this.accelPeakFrame);
    this.accelPeakFrame.fill(0);
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
      enabled: this.gate.isEnabled,
      estopLatched: this.gate.isEstopLatched,
      stopReason: this.stopReason,
      overridePercent: this.overridePercent,
      warnings: this.warnings(),
      stopping: { kind: stopping.kind, isActive: stopping.isActive, timeS: fin(stopping.time), distanceM: fin(stopping.distance) },
      stopPredictions,
      jointAccelPeak,
      ...(this.inputEvents ? { inputEvents: this.inputEvents } : {}),
    };
    if (this.inputEvents) this.inputEvents = [];
    const json = JSON.stringify(body);
    return json.slice(1, -1);
  }

  /** Marks the end (stop reason "session-ended") for the last frame. */
  end(): void {
    this.logEvent(INPUT_EVENT.end);
    this.gate.requireRelease("the session ended");
    this.state.qdot.fill(0);
    this.setStopReason("session-ended");
  }

  summary(): SimulationSummary {
    const stopsMeasured: SimulationSummary["stopsMeasured"] = {};
    for (const [kind, m] of Object.entries(this.stopsMeasured)) if (m.count > 0) stopsMeasured[kind] = { ...m };
    return {
      durationS: this.time,
      frames: this.frames,
      maxTcpSpeedMPerS: this.maxTcpSpeed,
      minSigma: Number.isFinite(this.minSigma) ? this.minSigma : 0,
      maxJointRateFraction: this.maxJointRateFraction,
      stops: { ...this.stopCounts },
      peakJointAccel: finiteArray(this.accelPeakSession),
      stopsMeasured,
      // The simulation drops nothing; the recording writer adds the frames it had to drop when it ends it.
      droppedFrames: 0,
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
