/**
 * The motion gate: input shaping and gating of the control step (PRODUCT.md "The control step", steps 1–2),
 * in front of controlStep / jointJogStep (steps 3–8). One pure class, used by the server's live simulation
 * and the tuning bench. No I/O and no clock: time is the tick counter, dt = 1/tickRateHz, so every rule
 * here (watchdog, ramps, stopping times) runs the same in a unit test as under load.
 *
 * Units: SI — m, rad, s; twists [m/s, rad/s]; joint rates rad/s (m/s for a prismatic joint); stick axes
 * and the override are fractions (−1 … 1, 0 … 1).
 *
 * Per tick the caller hands in the motion the arm made in the previous step (report.achievedTwist = J·q̇ and
 * state.qdot after damping and limits) and gets a command back:
 *   "cartesian" — a twist for controlStep in `frame`;  "joint" — joint rates for jointJogStep;
 *   "stop"      — joint rates for jointJogStep: a controlled stop in progress;
 *   "hold"      — nothing moves (q̇ = 0).
 *
 * Rules (ISO 13850:2015 principle for the latch and the reset, from memory — clause not verified; an
 * on-screen or gamepad STOP is not an emergency-stop device in the sense of ISO 13850):
 * - the enabling control counts only after the gate has SEEN it released: at construction, after
 *   requireRelease (a device reconnected, a numerical fault), after a watchdog trip and after an
 *   emergency stop. A reset of the latch never restarts motion: it re-arms only when the control is
 *   known released at that moment, so motion needs a fresh press;
 * - watchdog: an input older than the watchdog (in ticks) while the control is held trips a controlled
 *   stop, and the control must then be released and pressed again;
 * - controlled stop (enabling released, watchdog, requireRelease): ramps the ACHIEVED joint rates to zero
 *   by one factor for the whole vector (so the joint path, and to first order the TCP path, is kept), in
 *   the longest of T = |v|/a_lin, |ω|/a_ang, |q̇_i|/a_i (derived: every bound then holds). Once begun, a
 *   stop runs to rest; a press during it takes effect afterwards, from zero;
 * - emergency stop: the "instant halt (simulation)" — the caller zeroes the joint rates at once; latched
 *   until resetEstop. It is not a stop category of IEC 60204-1: nothing here is a safety function;
 * - input shaping: deadband with rescaling, expo, speed override (≤ the profile's maximum), scaling to the
 *   caps (the linear and angular parts of a twist each clamped to their cap·override, direction kept),
 *   slew limits (linear, angular, per joint by one factor), mode and frame changes through zero.
 * - stopping time and distance per stop kind, from the latest motion, every tick (predictions while
 *   moving, the remainder of the active stop while stopping), and the measured time and distance of each
 *   stop when it completes.
 * Hot path (tick, setInput, updatePredictions): no allocation, no throw. The constructor validates.
 */

import { KinematicsInputError, MAX_JOINTS } from "./arm.ts";
import type { BindingLimit, GuardState } from "./control-step.ts";
import { shapeAxis, slewUniform, slewVector3Into } from "./shaping.ts";

export const STOP_KINDS = ["enabling-released", "watchdog", "singularity-guard", "instant-halt"] as const;
/**
 * "enabling-released": controlled stop on release (or requireRelease). "watchdog": controlled stop after the
 * watchdog time without input (its time and distance include the wait). "singularity-guard": the control
 * step's stop-before guard, decelerating within the joint acceleration limits. "instant-halt": the emergency
 * stop in the simulation — joint rates zero at once.
 */
export type StopKind = (typeof STOP_KINDS)[number];

export type GateAction = "hold" | "cartesian" | "joint" | "stop";

/** Why the gate does not pass motion: "none" while enabled. */
export type GateStopReason = "none" | "enabling-released" | "watchdog" | "emergency-stop";

export interface MotionGateConfig {
  /** Joints of the arm (1 … MAX_JOINTS). */
  jointCount: number;
  tickRateHz: number;
  /** Input silence, while the enabling control is held, that trips a controlled stop [s]. */
  watchdog: number;
  /** Stick deadband (fraction, 0 ≤ d < 1) and expo (0 … 1). */
  deadband: number;
  expo: number;
  /** Full stick in Cartesian mode at 100 % override [m/s, rad/s]; finite. */
  tcpLinearCap: number;
  tcpAngularCap: number;
  /** Full stick in joint mode at 100 % override, per joint [rad/s or m/s]; finite. */
  jointRateCaps: ArrayLike<number>;
  /** The largest override (fraction, 0 < x ≤ 1); an input asking for more gets this. */
  maxOverride: number;
  /** Override before the first input (fraction); default maxOverride. */
  initialOverride?: number;
  /** Slew limit of the commanded twist and the TCP deceleration of a controlled stop [m/s², rad/s²]. */
  linearAccel: number;
  angularAccel: number;
  /**
   * Per joint: slew limit of a joint-jog command and the joint deceleration of a controlled stop
   * [rad/s² or m/s²]; Infinity: none. The same values as ControlParams.jointAccelLimits.
   */
  jointAccel: ArrayLike<number>;
  /** Start with the emergency stop latched (the operator's station is latched). */
  estopLatched?: boolean;
}

/** The previous step's motion as the gate reads it; a ControlStepReport satisfies it. */
export interface GateMotion {
  /** J·q̇ of the step, world frame [m/s, rad/s]. */
  readonly achievedTwist: ArrayLike<number>;
  /** The step's uniform cap factors (limits.ts): below 1, the command was not achievable. */
  readonly jointCapScale: number;
  readonly tcpLinearScale: number;
  readonly tcpAngularScale: number;
  readonly limitScale: number;
  readonly binding: BindingLimit;
  /** The singularity guard's state after the step ("stopped": braking to, or holding at, a halt). */
  readonly guardState: GuardState;
}

export interface GateCommand {
  action: GateAction;
  /** "cartesian": the frame of `twist`. */
  frame: "world" | "tool";
  /** "cartesian": [vx, vy, vz, wx, wy, wz] [m/s, rad/s]. */
  readonly twist: Float64Array;
  /** "joint" and "stop": one rate per joint [rad/s or m/s]. */
  readonly jointRates: Float64Array;
  /** Set for one tick after acknowledge(): the caller sets state.singularityAcknowledged. */
  acknowledge: boolean;
}

export interface StopEstimate {
  /** Time from the trigger (watchdog: from the last input) to rest [s]. */
  time: number;
  /** TCP path length in that time [m]. */
  distance: number;
}

export interface StoppingReport extends StopEstimate {
  kind: StopKind;
  /** True while a stop of this kind is in progress (time and distance are then what remains of it). */
  isActive: boolean;
}

export interface CompletedStop extends StopEstimate {
  kind: StopKind;
  /** The prediction in effect at the trigger. */
  predictedTime: number;
  predictedDistance: number;
}

/**
 * Duration of a controlled stop that ramps the given motion to zero by one factor: the longest of
 * |v|/a_lin, |ω|/a_ang and |q̇_i|/a_i over the first n joints (derived: with a linear ramp of that length
 * no bound is exceeded). A joint limit of Infinity does not bind. Never throws; non-finite input → Infinity.
 */
export function controlledStopTime(
  linearSpeed: number, angularSpeed: number, qdot: ArrayLike<number>, n: number,
  linearDecel: number, angularDecel: number, jointDecel: ArrayLike<number>,
): number {
  let t = linearSpeed / linearDecel;
  const ta = angularSpeed / angularDecel;
  if (ta > t) t = ta;
  for (let i = 0; i < n; i++) {
    const a = jointDecel[i]!;
    if (a === Infinity) continue;
    const v = qdot[i]!;
    const ti = (v < 0 ? -v : v) / a;
    if (ti > t || ti !== ti) t = ti;
  }
  return t === t ? t : Infinity;
}

function requirePositive(v: unknown, field: string, allowInfinity = false): void {
  if (typeof v !== "number" || !(v > 0) || (!allowInfinity && v === Infinity)) {
    throw new KinematicsInputError(field, `must be a number above 0${allowInfinity ? " (Infinity for none)" : ""}, got ${String(v)}`);
  }
}

function makeEstimates(): Record<StopKind, StopEstimate> {
  return {
    "enabling-released": { time: 0, distance: 0 },
    watchdog: { time: 0, distance: 0 },
    "singularity-guard": { time: 0, distance: 0 },
    "instant-halt": { time: 0, distance: 0 },
  };
}

export class MotionGate {
  readonly n: number;
  readonly dt: number;
  readonly tickRateHz: number;
  /** Watchdog in ticks: the stop begins on the first tick whose input is older than this. */
  readonly watchdogTicks: number;
  private readonly deadband: number;
  private readonly expo: number;
  private readonly tcpLinearCap: number;
  private readonly tcpAngularCap: number;
  private readonly jointRateCaps: Float64Array;
  private readonly maxOverride: number;
  private readonly linearAccel: number;
  private readonly angularAccel: number;
  private readonly jointAccel: Float64Array;
  /** jointAccel·dt: the largest change of a joint-rate command per tick. */
  private readonly jointSteps: Float64Array;

  /** The command handed out by tick (reused every tick). */
  readonly command: GateCommand;
  /** Predicted stopping time and distance per kind, from the latest motion (updatePredictions). */
  readonly predictions: Record<StopKind, StopEstimate> = makeEstimates();
  /** The active stop, or the prediction for releasing the enabling control now. */
  readonly stopping: StoppingReport = { kind: "enabling-released", isActive: false, time: 0, distance: 0 };
  /** The latest completed stop (measured) and how many stops have completed so far. */
  readonly lastStop: CompletedStop = { kind: "enabling-released", time: 0, distance: 0, predictedTime: 0, predictedDistance: 0 };
  completedStops = 0;

  /** Ticks run so far. */
  ticks = 0;

  // Latest input.
  private readonly rawAxes = new Float64Array(MAX_JOINTS);
  private inputMode: "cartesian" | "joint" = "cartesian";
  private inputFrame: "world" | "tool" = "world";
  private overrideValue: number;
  private enablingHeld = false;
  /** The latest input said released, and nothing since made the control's state unknown. */
  private knownReleased = false;
  private armed = false;
  private estopLatched: boolean;
  private watchdogTripped = false;
  private releaseWhy: string | null = "the session started";
  private enabled = false;
  private pendingAcknowledge = false;
  /** Ticks since the last input that count towards the watchdog (stalls excused), and the credit. */
  private inputAgeTicks = 0;
  private excuseCredit = 0;
  /** Real ticks and TCP path since the last input (the watchdog stop's measurement starts there). */
  private ticksSinceInput = 0;
  private distanceSinceInput = 0;
  private predictedAtInputTime = 0;
  private predictedAtInputDistance = 0;

  // Command after shaping and slew.
  /**
   * Per-tick scalars handed to the helpers below through a typed array, not as arguments: a double passed
   * to a function V8 does not inline is boxed (a heap allocation per call). [0] linear step, [1] angular step,
   * [2] linear limit, [3] angular limit.
   */
  private readonly scalars = new Float64Array(4);
  private readonly target = new Float64Array(MAX_JOINTS);
  private readonly cmdTwist = new Float64Array(6);
  private readonly cmdJoints: Float64Array;
  private cmdMode: "cartesian" | "joint" = "cartesian";
  private cmdFrame: "world" | "tool" = "world";
  private commandZero = true;
  private lastAction: GateAction = "hold";

  // Controlled stop in progress.
  private stoppingNow = false;
  private stopKind: StopKind = "enabling-released";
  /** Time left of the ramp [s]. */
  private stopRemaining = 0;

  // Measurement of the stop in progress (kind null: none).
  private measureKind: StopKind | null = null;
  private measureTicks = 0;
  private measureDistance = 0;
  private measurePredictedTime = 0;
  private measurePredictedDistance = 0;
  private wasMoving = false;

  constructor(config: MotionGateConfig) {
    const n = config.jointCount;
    if (!Number.isInteger(n) || n < 1 || n > MAX_JOINTS) {
      throw new KinematicsInputError("jointCount", `must be a whole number 1 … ${MAX_JOINTS}, got ${String(n)}`);
    }
    requirePositive(config.tickRateHz, "tickRateHz");
    requirePositive(config.watchdog, "watchdog");
    if (typeof config.deadband !== "number" || !(config.deadband >= 0 && config.deadband < 1)) {
      throw new KinematicsInputError("deadband", `must be 0 ≤ d < 1, got ${String(config.deadband)}`);
    }
    if (typeof config.expo !== "number" || !(config.expo >= 0 && config.expo <= 1)) {
      throw new KinematicsInputError("expo", `must be 0 … 1, got ${String(config.expo)}`);
    }
    // Full stick maps onto the caps, so they must be finite (0·Infinity would make a centred stick NaN).
    requirePositive(config.tcpLinearCap, "tcpLinearCap");
    requirePositive(config.tcpAngularCap, "tcpAngularCap");
    requirePositive(config.linearAccel, "linearAccel");
    requirePositive(config.angularAccel, "angularAccel");
    if (typeof config.maxOverride !== "number" || !(config.maxOverride > 0 && config.maxOverride <= 1)) {
      throw new KinematicsInputError("maxOverride", `must be above 0 and at most 1, got ${String(config.maxOverride)}`);
    }
    for (const [field, v] of [["jointRateCaps", config.jointRateCaps], ["jointAccel", config.jointAccel]] as const) {
      if (!v || v.length !== n) throw new KinematicsInputError(field, `must have ${n} numbers (one per joint)`);
      for (let i = 0; i < n; i++) requirePositive(v[i], `${field}[${i}]`, field === "jointAccel");
    }
    this.n = n;
    this.tickRateHz = config.tickRateHz;
    this.dt = 1 / config.tickRateHz;
    // Whole ticks, at least one (derived: 200 ms at 500 Hz = 100 ticks).
    this.watchdogTicks = Math.max(1, Math.round(config.watchdog * config.tickRateHz));
    this.deadband = config.deadband;
    this.expo = config.expo;
    this.tcpLinearCap = config.tcpLinearCap;
    this.tcpAngularCap = config.tcpAngularCap;
    this.jointRateCaps = Float64Array.from(config.jointRateCaps);
    this.maxOverride = config.maxOverride;
    this.overrideValue = Math.min(config.initialOverride ?? config.maxOverride, config.maxOverride);
    if (!(this.overrideValue >= 0)) this.overrideValue = 0;
    this.linearAccel = config.linearAccel;
    this.angularAccel = config.angularAccel;
    this.jointAccel = Float64Array.from(config.jointAccel);
    this.jointSteps = new Float64Array(n);
    for (let i = 0; i < n; i++) this.jointSteps[i] = this.jointAccel[i]! * this.dt;
    this.cmdJoints = new Float64Array(n);
    this.estopLatched = config.estopLatched === true;
    if (this.estopLatched) this.releaseWhy = "the emergency stop was reset";
    this.command = { action: "hold", frame: "world", twist: new Float64Array(6), jointRates: new Float64Array(n), acknowledge: false };
  }

  // --------------------------------------------------------------------------------------------------
  // State, read by the caller for frames and warnings
  // --------------------------------------------------------------------------------------------------

  /** Motion passes this tick: control held, armed, not latched, no stop in progress. */
  get isEnabled(): boolean {
    return this.enabled;
  }
  /** The latest input said the enabling control is held (cleared by a watchdog trip). */
  get isEnablingHeld(): boolean {
    return this.enablingHeld;
  }
  /** The enabling control has been seen released since the last event that requires it. */
  get isArmed(): boolean {
    return this.armed;
  }
  get isEstopLatched(): boolean {
    return this.estopLatched;
  }
  get isWatchdogTripped(): boolean {
    return this.watchdogTripped;
  }
  /** A controlled stop is ramping. */
  get isStopping(): boolean {
    return this.stoppingNow;
  }
  /** The shaped, slewed command is zero. */
  get isCommandZero(): boolean {
    return this.commandZero;
  }
  /** The override in effect (fraction). */
  get override(): number {
    return this.overrideValue;
  }
  /** Why a release is needed before motion (e.g. "the input device reconnected"), or null. */
  get releaseReason(): string | null {
    return this.armed ? null : this.releaseWhy;
  }
  get reason(): GateStopReason {
    if (this.estopLatched) return "emergency-stop";
    if (this.watchdogTripped) return "watchdog";
    if (!this.enabled) return "enabling-released";
    return "none";
  }

  // --------------------------------------------------------------------------------------------------
  // Events
  // --------------------------------------------------------------------------------------------------

  /**
   * The latest input state: axes[axesOffset …] (6 for Cartesian, n for joint mode; the caller checks the
   * count), override as a fraction. Stamped with the tick counter; no allocation.
   */
  setInput(
    isEnabling: boolean, mode: "cartesian" | "joint", frame: "world" | "tool", override: number,
    axes: ArrayLike<number>, axesOffset = 0,
  ): void {
    const count = mode === "cartesian" ? 6 : this.n;
    const raw = this.rawAxes;
    for (let i = 0; i < count; i++) raw[i] = axes[axesOffset + i]!;
    for (let i = count; i < MAX_JOINTS; i++) raw[i] = 0;
    this.inputMode = mode;
    this.inputFrame = frame;
    const o = override < this.maxOverride ? override : this.maxOverride;
    this.overrideValue = o >= 0 ? o : 0;
    if (!isEnabling) {
      // Seen released: re-arms (never while latched) and clears a watchdog trip.
      this.watchdogTripped = false;
      if (!this.estopLatched) this.armed = true;
    }
    this.enablingHeld = isEnabling;
    this.knownReleased = !isEnabling;
    this.inputAgeTicks = 0;
    this.excuseCredit = 0;
    this.ticksSinceInput = 0;
    this.distanceSinceInput = 0;
    this.predictedAtInputTime = this.predictions.watchdog.time;
    this.predictedAtInputDistance = this.predictions.watchdog.distance;
  }

  /**
   * Ticks of input silence that are the server's own fault (a stalled process: inputs sit unread), not
   * the client's; they do not count towards the watchdog. Credit is capped at one watchdog period.
   */
  excuseInputSilence(ticks: number): void {
    if (!(ticks > 0)) return;
    const c = this.excuseCredit + ticks;
    this.excuseCredit = c < this.watchdogTicks ? c : this.watchdogTicks;
  }

  /**
   * Motion needs the enabling control seen released again (a device reconnected, a fault). A moving arm
   * makes a controlled stop ("enabling-released") from the next tick.
   */
  requireRelease(reason: string): void {
    this.armed = false;
    this.enabled = false;
    this.knownReleased = false;
    this.releaseWhy = reason;
  }

  /**
   * Emergency stop: the instant halt (simulation). The caller zeroes the joint rates at once (state.qdot,
   * the report's achieved twist); latched until resetEstop. Counted as a completed stop of time 0 and
   * distance 0 (nothing moves after it is applied).
   */
  emergencyStop(): void {
    if (!this.estopLatched) {
      this.completeStop("instant-halt", 0, 0, 0, 0);
    }
    this.estopLatched = true;
    this.armed = false;
    this.releaseWhy = "the emergency stop was reset";
    this.enabled = false;
    this.stoppingNow = false;
    this.measureKind = null;
    this.zeroCommand();
    this.lastAction = "hold";
    this.wasMoving = false;
  }

  /**
   * Clears the latch. Never restarts motion: the gate re-arms only if the enabling control is known to be
   * released at this moment (the latest input said so), so motion needs a fresh press.
   */
  resetEstop(): void {
    if (!this.estopLatched) return;
    this.estopLatched = false;
    this.armed = this.knownReleased;
  }

  acknowledge(): void {
    if (!this.estopLatched) this.pendingAcknowledge = true;
  }

  /** The control step faulted (it zeroed q̇): drop the command; motion needs a release and a fresh press. */
  noteFault(): void {
    this.zeroCommand();
    this.requireRelease("a numerical fault stopped the arm");
  }

  // --------------------------------------------------------------------------------------------------
  // The tick
  // --------------------------------------------------------------------------------------------------

  /**
   * One tick: `motion` and `qdot` are what the previous step did (achieved twist and joint rates; zero
   * when it held). Returns this.command. No allocation, no throw.
   */
  tick(motion: GateMotion, qdot: ArrayLike<number>): GateCommand {
    this.ticks++;
    const n = this.n, dt = this.dt;
    const cmd = this.command;
    cmd.acknowledge = false;
    const at = motion.achievedTwist;
    const lin = Math.sqrt(at[0]! * at[0]! + at[1]! * at[1]! + at[2]! * at[2]!);
    let moving = false;
    for (let i = 0; i < n; i++) if (qdot[i] !== 0) moving = true;
    const wasMoving = this.wasMoving;
    this.wasMoving = moving;

    // Path since the last input and of a stop being measured: the previous step's |v|·dt.
    if (this.ticksSinceInput > 0) this.distanceSinceInput += lin * dt;
    this.ticksSinceInput++;
    if (this.measureKind !== null && moving) {
      this.measureDistance += lin * dt;
      if (this.measureKind === "singularity-guard") this.measureTicks++;
    }

    // Watchdog (ticks; excused stall ticks do not count).
    if (this.excuseCredit >= 1) this.excuseCredit -= 1;
    else this.inputAgeTicks++;
    if (this.enablingHeld && this.inputAgeTicks > this.watchdogTicks && !this.estopLatched) {
      this.watchdogTripped = true;
      this.enablingHeld = false;
      this.knownReleased = false;
      this.armed = false;
      this.releaseWhy = "no input arrived within the watchdog time";
    }
    this.updatePredictions(motion, qdot);

    if (this.estopLatched) {
      this.enabled = false;
      this.zeroCommand();
      return this.emit("hold");
    }
    if (this.pendingAcknowledge) {
      cmd.acknowledge = true;
      this.pendingAcknowledge = false;
    }

    // The step's own stop-before guard, measured from the first step it braked (or held) in to rest. An
    // acknowledgement or a move away ends the measurement without a stop; the guard's state may flicker to
    // "clear" in the last ticks of braking, which does not.
    const guardBraking = motion.guardState === "stopped" || motion.binding === "singularity-guard";
    if (this.measureKind === "singularity-guard") {
      if (!moving) this.finishMeasure();
      else if (motion.guardState === "acknowledged" || motion.guardState === "backing-out" || motion.guardState === "off") {
        this.measureKind = null;
      }
    } else if (this.measureKind === null && !this.stoppingNow && guardBraking) {
      if (moving) {
        const g = this.predictions["singularity-guard"];
        this.startMeasure("singularity-guard", 1, lin * dt, g.time + dt, g.distance + lin * dt);
      } else if (wasMoving) {
        this.completeStop("singularity-guard", 0, 0, 0, 0); // held within one step (no joint limits)
      }
    }

    // A controlled stop in progress runs to rest.
    if (this.stoppingNow) {
      this.enabled = false;
      return this.rampStep(qdot);
    }

    const isEnabled = this.enablingHeld && this.armed;
    this.enabled = isEnabled;
    if (!isEnabled) {
      this.zeroCommand();
      this.cmdMode = this.inputMode;
      this.cmdFrame = this.inputFrame;
      if (!moving) return this.emit("hold");
      // Controlled stop from the achieved motion.
      const kind: StopKind = this.watchdogTripped ? "watchdog" : "enabling-released";
      const ang = Math.sqrt(at[3]! * at[3]! + at[4]! * at[4]! + at[5]! * at[5]!);
      const T = controlledStopTime(lin, ang, qdot, n, this.linearAccel, this.angularAccel, this.jointAccel);
      this.stoppingNow = true;
      this.stopKind = kind;
      this.stopRemaining = T;
      if (kind === "watchdog") {
        // Measured from the last input: the wait is part of the stop.
        this.startMeasure(kind, this.ticksSinceInput - 1, this.distanceSinceInput, this.predictedAtInputTime, this.predictedAtInputDistance);
      } else {
        this.startMeasure(kind, 0, 0, T, (lin * T) / 2);
      }
      return this.rampStep(qdot);
    }

    // Enabled: shaping (step 1) and slew.
    const target = this.target;
    // Only what is read below (6 axes or n joints); a loop: TypedArray.fill is a builtin call per tick.
    for (let i = 0, m = n > 6 ? n : 6; i < m; i++) target[i] = 0;
    let switching = this.inputMode !== this.cmdMode || (this.inputMode === "cartesian" && this.inputFrame !== this.cmdFrame);
    if (switching && this.commandZero) {
      this.cmdMode = this.inputMode;
      this.cmdFrame = this.inputFrame;
      switching = false;
    }
    const raw = this.rawAxes;
    const o = this.overrideValue, db = this.deadband, ex = this.expo;
    // Anti-windup: when the command slows down while the previous step had to scale it below what was
    // asked (a cap or a joint limit bound), slow down from what was achieved, not from the command (the
    // issue-8 finding for the stop ramp, applied to the stick too; derived).
    let sCap = motion.jointCapScale;
    if (motion.tcpLinearScale < sCap) sCap = motion.tcpLinearScale;
    if (motion.tcpAngularScale < sCap) sCap = motion.tcpAngularScale;
    if (motion.limitScale < sCap) sCap = motion.limitScale;
    const windup = sCap < 1 && sCap >= 0 && this.lastAction === this.cmdMode;
    if (this.cmdMode === "cartesian") {
      const box = this.scalars;
      box[0] = this.linearAccel * dt;
      box[1] = this.angularAccel * dt;
      box[2] = this.tcpLinearCap * o;
      box[3] = this.tcpAngularCap * o;
      if (!switching) {
        for (let i = 0; i < 3; i++) target[i] = shapeAxis(raw[i]!, db, ex) * box[2]!;
        for (let i = 3; i < 6; i++) target[i] = shapeAxis(raw[i]!, db, ex) * box[3]!;
        clampNorm3(target, 0, box, 2);
        clampNorm3(target, 3, box, 3);
      }
      const c = this.cmdTwist;
      if (windup && (isSlowingDown3(c, target, 0) || isSlowingDown3(c, target, 3))) {
        for (let i = 0; i < 6; i++) c[i] = c[i]! * sCap;
      }
      slewVector3Into(c, target, 0, box, 0);
      slewVector3Into(c, target, 3, box, 1);
      let zero = true;
      for (let i = 0; i < 6; i++) if (c[i] !== 0) zero = false;
      this.commandZero = zero;
      if (zero) return this.emit("hold");
      cmd.frame = this.cmdFrame;
      for (let i = 0; i < 6; i++) cmd.twist[i] = c[i]!;
      return this.emit("cartesian");
    }
    if (!switching) {
      for (let i = 0; i < n; i++) target[i] = shapeAxis(raw[i]!, db, ex) * this.jointRateCaps[i]! * o;
    }
    const c = this.cmdJoints;
    if (windup) {
      let dot = 0;
      for (let i = 0; i < n; i++) dot += (target[i]! - c[i]!) * c[i]!;
      if (dot < 0) for (let i = 0; i < n; i++) c[i] = c[i]! * sCap;
    }
    slewUniform(c, target, n, this.jointSteps);
    let zero = true;
    for (let i = 0; i < n; i++) if (c[i] !== 0) zero = false;
    this.commandZero = zero;
    if (zero) return this.emit("hold");
    for (let i = 0; i < n; i++) cmd.jointRates[i] = c[i]!;
    return this.emit("joint");
  }

  /**
   * Stopping predictions from the given motion (the latest step's achieved twist and joint rates), into
   * this.predictions and this.stopping. Called by tick; call it again after the step for a frame. The
   * watchdog's includes the whole watchdog wait at the current velocity (a prediction at constant velocity:
   * while the command still ramps up, the speed at the trip can be higher). No allocation.
   */
  updatePredictions(motion: GateMotion, qdot: ArrayLike<number>): StoppingReport {
    const at = motion.achievedTwist;
    const lin = Math.sqrt(at[0]! * at[0]! + at[1]! * at[1]! + at[2]! * at[2]!);
    const ang = Math.sqrt(at[3]! * at[3]! + at[4]! * at[4]! + at[5]! * at[5]!);
    const n = this.n;
    const T = controlledStopTime(lin, ang, qdot, n, this.linearAccel, this.angularAccel, this.jointAccel);
    // The guard decelerates the joints within their acceleration limits only (the control step).
    let Tg = 0;
    for (let i = 0; i < n; i++) {
      const a = this.jointAccel[i]!;
      if (a === Infinity) continue;
      const v = qdot[i]!;
      const t = (v < 0 ? -v : v) / a;
      if (t > Tg) Tg = t;
    }
    const tw = this.watchdogTicks * this.dt;
    const p = this.predictions;
    p["enabling-released"].time = T;
    p["enabling-released"].distance = (lin * T) / 2;
    p.watchdog.time = tw + T;
    p.watchdog.distance = lin * tw + (lin * T) / 2;
    p["singularity-guard"].time = Tg;
    p["singularity-guard"].distance = (lin * Tg) / 2;
    p["instant-halt"].time = 0;
    p["instant-halt"].distance = 0;

    const s = this.stopping;
    if (this.estopLatched) {
      s.kind = "instant-halt";
      s.isActive = true;
      s.time = 0;
      s.distance = 0;
    } else if (this.stoppingNow) {
      const rem = this.stopRemaining > 0 ? this.stopRemaining : 0;
      s.kind = this.stopKind;
      s.isActive = true;
      s.time = rem;
      s.distance = (lin * rem) / 2;
    } else if (this.measureKind === "singularity-guard") {
      s.kind = "singularity-guard";
      s.isActive = true;
      s.time = Tg;
      s.distance = (lin * Tg) / 2;
    } else {
      s.kind = "enabling-released";
      s.isActive = false;
      s.time = T;
      s.distance = (lin * T) / 2;
    }
    return s;
  }

  // --------------------------------------------------------------------------------------------------
  // Internals
  // --------------------------------------------------------------------------------------------------

  private emit(action: GateAction): GateCommand {
    if (action === "hold") {
      this.command.twist.fill(0);
      this.command.jointRates.fill(0);
    }
    this.command.action = action;
    this.lastAction = action;
    return this.command;
  }

  private zeroCommand(): void {
    this.cmdTwist.fill(0);
    this.cmdJoints.fill(0);
    this.commandZero = true;
  }

  /** One tick of the ramp: q̇ ← g·q̇_prev with g = 1 − dt/T_left, so the rates reach 0 at T. */
  private rampStep(qdot: ArrayLike<number>): GateCommand {
    const n = this.n, dt = this.dt;
    let moving = false;
    for (let i = 0; i < n; i++) if (qdot[i] !== 0) moving = true;
    const left = this.stopRemaining;
    if (!moving || !(left > dt)) {
      this.stoppingNow = false;
      this.stopRemaining = 0;
      if (this.measureKind === this.stopKind) this.finishMeasure();
      this.zeroCommand();
      return this.emit("hold");
    }
    const g = 1 - dt / left;
    const r = this.command.jointRates;
    for (let i = 0; i < n; i++) r[i] = g * qdot[i]!;
    this.stopRemaining = left - dt;
    if (this.measureKind === this.stopKind) this.measureTicks++;
    return this.emit("stop");
  }

  private startMeasure(kind: StopKind, ticks: number, distance: number, predictedTime: number, predictedDistance: number): void {
    this.measureKind = kind;
    this.measureTicks = ticks > 0 ? ticks : 0;
    this.measureDistance = distance;
    this.measurePredictedTime = predictedTime;
    this.measurePredictedDistance = predictedDistance;
  }

  private finishMeasure(): void {
    const kind = this.measureKind;
    if (kind === null) return;
    this.measureKind = null;
    this.completeStop(kind, this.measureTicks * this.dt, this.measureDistance, this.measurePredictedTime, this.measurePredictedDistance);
  }

  private completeStop(kind: StopKind, time: number, distance: number, predictedTime: number, predictedDistance: number): void {
    const s = this.lastStop;
    s.kind = kind;
    s.time = time;
    s.distance = distance;
    s.predictedTime = predictedTime;
    s.predictedDistance = predictedDistance;
    this.completedStops++;
  }
}

/** Scales v[o..o+2] down to Euclidean norm ≤ box[i], direction kept. */
function clampNorm3(v: Float64Array, o: number, box: Float64Array, i: number): void {
  const max = box[i]!;
  const x = v[o]!, y = v[o + 1]!, z = v[o + 2]!;
  const len = Math.sqrt(x * x + y * y + z * z);
  if (len > max) {
    const k = max / len;
    v[o] = x * k;
    v[o + 1] = y * k;
    v[o + 2] = z * k;
  }
}

/** The change target − cur points against cur (the 3-vector at o slows down or reverses). */
function isSlowingDown3(cur: Float64Array, target: Float64Array, o: number): boolean {
  const c0 = cur[o]!, c1 = cur[o + 1]!, c2 = cur[o + 2]!;
  return (target[o]! - c0) * c0 + (target[o + 1]! - c1) * c1 + (target[o + 2]! - c2) * c2 < 0;
}
