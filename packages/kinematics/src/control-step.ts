/**
 * One resolved-rate control step (PRODUCT.md "The control step", steps 3–8; input shaping and gating,
 * steps 1–2, are the caller's). Units: SI throughout — m, rad, s; twists [m/s, rad/s]; joint rates rad/s
 * (m/s for prismatic joints); joint accelerations rad/s² (m/s²); σ and λ in the units of J (m and rad
 * mixed, METHODS.md §3).
 *
 * Cartesian step (controlStep):
 *  1. J, the TCP pose and the Gram matrix at q (jacobianPoseGramInto, one fused pass).
 *  2. Command into the world frame (tool-frame twists rotated by the TCP rotation); optional drift
 *     correction adds c = K·e, e the pose error to a reference pose (closed-loop inverse kinematics,
 *     Siciliano et al. 2009 sect. 3.7 — from memory), itself capped by the TCP linear and angular caps.
 *     0 < K·dt ≤ 1: the error then shrinks by (1 − K·dt) per step without changing sign (derived; above 1
 *     the discrete loop overshoots, above 2 it diverges — METHODS.md §6); K·dt > 1 faults.
 *  3. σ_min and w = sqrt(det J Jᵀ) (Yoshikawa 1985) by the warm-started estimator of sigma-estimate.ts.
 *  4. λ from the damping scheme: damping.ts (dampingForSchemeInto), not a copy.
 *  5. qdot = Jᵀ(J Jᵀ + λ²I)⁻¹ v (dls.ts), or numerical filtering (Maciejewski & Klein 1988) of every
 *     direction whose σ is below ε, each with the schedule's λ at its own σ (the two tracked directions;
 *     a full eigen-decomposition of J Jᵀ when a third may be small too). Redundant arms (n > 6) may add
 *     the null-space term (I − J⁺J)·qdot0, qdot0 = −k·∇H(q) with H Liégeois' joint-limit criterion
 *     (Liégeois 1977, IEEE Trans. SMC-7(12) — from memory) and J⁺ the same damped inverse.
 *  6. One scale factor s = min(joint-rate caps, TCP linear cap, TCP angular cap, joint-limit slow-down)
 *     applied to the whole qdot, so J·qdot keeps its direction (limits.ts capScaleInto — written out in the
 *     step's sweeps over the joints, bit-identical — and jointLimitScaleInto). With acceleration limits, the
 *     change of qdot per step is then limited by one factor f (limits.ts accelScaleInto, written out the
 *     same way) so the change keeps its direction; the joint-limit stand-offs
 *     (braking curve, limits.ts brakingSpeed/brakingFloorInto) and the speed caps win over it.
 *  7. Singularity guard "stop-before": when the motion, followed by a stop within the acceleration limits
 *     (the stopping horizon; none without limits), would end with σ_min below the threshold and lower than
 *     now, the arm brakes to a halt (s = 0) until the operator acknowledges; motion that raises σ_min
 *     (backing out) is always allowed. Once stopped, every motion that lowers σ_min is held and the state
 *     stays "stopped" (the acknowledgement is owed) until it is given or σ_min is back above
 *     releaseFactor·sigmaStop, however the push, the enabling control or the mode change meanwhile. The stop-and-warn rule for coordinated motion near a singularity
 *     follows the manual-mode singularity clause of ISO 10218-1:2011 (from memory — clause not verified;
 *     the 2011 edition was replaced in February 2025).
 *  8. q += qdot·dt (explicit Euler, Whitney 1969). The drift reference advances by the achieved twist of
 *     the command: J·qdot less the correction's own share (state.qdotCorrection), so what damping and the
 *     limits refuse never winds up in the error, and the correction does remove the error it acts on.
 * Never throws and never allocates: a degenerate case zeroes qdot, leaves q unchanged and is named in
 * report.fault.
 */

import type { ArmKernel, ArmModel } from "./arm.ts";
import { KinematicsInputError, MAX_JOINTS, compileArm, requireFiniteVector, validateArm } from "./arm.ts";
import type { DampingScheme } from "./damping.ts";
import { dampingForSchemeInto, validateDampingScheme } from "./damping.ts";
import { dlsFilteredFromGramInto, dlsFromGramBoxed, dlsSolveWithFactor, jtY6Into } from "./dls.ts";
import { jacobianPoseGramInto } from "./jacobian.ts";
import {
  brakingFloorInto, jointLimitScaleInto, stoppingHorizonInto, stopsBeforeStandOffs,
} from "./limits.ts";
import { forwardPoseInto } from "./pose.ts";
import type { SigmaTracker } from "./sigma-estimate.ts";
import {
  copySigmaTracker, createSigmaTracker, estimateSigmaMin, estimateSigmaMinSolve6, resetSigmaTracker,
} from "./sigma-estimate.ts";
import { symmetricEigenInto } from "./svd.ts";
import { advancePoseInPlace, poseErrorInto, toolTwistToWorldInto } from "./twist.ts";

export type GuardPolicy = "damp-through" | "stop-before";

export interface SingularityGuardParams {
  policy: GuardPolicy;
  /**
   * "stop-before": brake to a halt when the motion, followed by a stop within the acceleration limits,
   * would bring σ_min below this (units of σ).
   */
  sigmaStop: number;
  /**
   * An acknowledgement lapses once σ_min is back above releaseFactor·sigmaStop (≥ 1), so the next
   * approach stops again.
   */
  releaseFactor: number;
}

export interface DriftCorrectionParams {
  /** K [1/s]; the step faults with "unstable-drift-gain" unless K·dt ≤ 1. */
  gain: number;
  /** Re-anchor distance [m]: when the position error exceeds it, the reference moves to the current pose. */
  maxPositionError: number;
  /** Same for the orientation error |e_O| = sin(angle) [dimensionless, ≈ rad]. */
  maxOrientationError: number;
}

/** Null-space joint-limit avoidance for redundant arms (n > 6; ignored otherwise). */
export interface NullSpaceParams {
  /**
   * k [1/s]: qdot0_i = −k·(q_i − q̄_i)·(Δ̄/Δ_i)², q̄_i the middle of joint i's range, Δ_i its half-range,
   * Δ̄ the arm's root-mean-square half-range — the gradient −k·Δ̄²·∇H of Liégeois' (1977) criterion
   * H = ½ Σ ((q_i − q̄_i)/Δ_i)² (his form up to a constant factor), so a joint with an average range is
   * pulled toward its middle at k per second. Joints without limits are not pulled. Acts only while a
   * twist is commanded (no self-motion at rest). 0: off.
   */
  gain: number;
}

/** Tuning of one control step. SI units. Read every step (may change between steps); never mutated. */
export interface ControlParams {
  damping: DampingScheme;
  /**
   * Numerical filtering (Maciejewski & Klein 1988): damp only the directions whose σ is below ε, each with
   * the schedule's λ at its own σ, and leave the others undamped. Needs the singular-value schedule's ε;
   * with the fixed or manipulability scheme there is no region width, so every direction is damped (full DLS).
   */
  dampSmallestOnly: boolean;
  /** Per-joint rate caps [rad/s or m/s], combined with the arm's maxSpeed (the smaller wins); null: arm only. */
  jointRateCaps: ArrayLike<number> | null;
  /**
   * Per-joint acceleration limits [rad/s² or m/s²], combined with the arm's rated acceleration
   * (kernel.maxAccel; the smaller wins); null: no acceleration limit. The change of qdot per step is
   * limited by one factor for the whole vector, so its direction is kept.
   */
  jointAccelLimits: ArrayLike<number> | null;
  /** TCP linear speed cap [m/s] (e.g. 0.25, ISO 10218-1:2011 reduced speed); Infinity for none. */
  tcpLinearCap: number;
  /** TCP angular speed cap [rad/s]; Infinity for none. */
  tcpAngularCap: number;
  /** Stand-off from each joint limit that motion never enters [rad or m], one number or one per joint. */
  jointLimitMargin: number | ArrayLike<number>;
  /** Width of the slow-down zone before the stand-off [rad or m], one number or one per joint; 0: none. */
  jointLimitSlowZone: number | ArrayLike<number>;
  guard: SingularityGuardParams;
  /** Closed-loop drift correction, or null for open-loop jogging. */
  driftCorrection: DriftCorrectionParams | null;
  /** Null-space joint-limit avoidance (n > 6), or null for the minimum-norm solution. */
  nullSpace: NullSpaceParams | null;
  /** Frame of the commanded twist: "world" (base) or "tool" (rotated into world by the TCP rotation). */
  twistFrame: "world" | "tool";
}

export type BindingLimit =
  | "none" | "joint-rate" | "tcp-linear" | "tcp-angular" | "joint-limit" | "singularity-guard";

/**
 * "off": policy damp-through (or joint jog). "clear": no hold. "stopped": braking or held before the
 * singular region, waiting for an acknowledgement (it stays until the acknowledgement or σ_min above
 * releaseFactor·sigmaStop). "backing-out": inside the region or owing an acknowledgement, moving out. "acknowledged": the operator acknowledged; damping through.
 */
export type GuardState = "off" | "clear" | "stopped" | "backing-out" | "acknowledged";

export type ControlFault =
  | "none"
  | "invalid-dt"
  | "invalid-command"
  | "invalid-params"
  | "unstable-drift-gain"
  | "singular-solve"
  | "non-finite-result";

export interface ControlState {
  readonly n: number;
  /** Joint positions [rad or m]; advanced by each step. */
  readonly q: Float64Array;
  /** Joint rates applied by the last step [rad/s or m/s] (the acceleration limit starts from these). */
  readonly qdot: Float64Array;
  /** The drift correction's share of qdot [rad/s or m/s] (zero without drift correction). */
  readonly qdotCorrection: Float64Array;
  /** Reference TCP pose for drift correction (4x4 row-major); advanced by the achieved twist of the command. */
  readonly referencePose: Float64Array;
  guardState: GuardState;
  /** Set by the caller when the operator acknowledges a singularity stop; cleared by the step on release. */
  singularityAcknowledged: boolean;
  /**
   * The stop-before guard has stopped the arm and the acknowledgement is still owed: set by the step when
   * the guard stops, cleared by an acknowledgement or once σ_min is back above releaseFactor·sigmaStop.
   * While set, guardState is "stopped" (or "backing-out" while the arm moves away) and every motion that
   * lowers σ_min is held, so the need neither flickers with the push nor lapses when the push stops.
   */
  isGuardHolding: boolean;
  /** Seconds integrated so far and steps taken. */
  time: number;
  steps: number;
}

export interface ControlStepReport {
  mode: "cartesian" | "joint";
  /** Estimated smallest and second-smallest singular values of J at the start of the step. */
  sigmaMin: number;
  sigmaSecond: number;
  /** w = sqrt(det(J Jᵀ)) (product of the min(6, n) singular values). */
  manipulability: number;
  /** λ of the scheme at sigmaMin (numerical filtering damps each small direction with λ at its own σ). */
  lambda: number;
  /** How many singular directions the solve damped (0 undamped, min(6, n) for full DLS with λ > 0). */
  dampedDirections: number;
  /** Numerical filtering needed the full eigen-decomposition (a third σ may have been below ε). */
  filterFullDecomposition: boolean;
  jointCapScale: number;
  tcpLinearScale: number;
  tcpAngularScale: number;
  limitScale: number;
  /** The factor s applied to the solve's qdot: the minimum of the four above, or 0 when the guard stops. */
  scale: number;
  /** The factor f applied to the change of qdot by the acceleration limit (1: not limiting or no limits). */
  accelScale: number;
  /** The joint whose acceleration limit set accelScale, else −1. */
  accelBindingJoint: number;
  /** max_i |qdot_i − previous qdot_i|/dt this step [rad/s² or m/s²]. */
  maxJointAccel: number;
  binding: BindingLimit;
  /** The joint that bound the motion (joint-rate or joint-limit), else −1. */
  bindingJoint: number;
  guardState: GuardState;
  /** The caller's command in the world frame (twist, or J·rates in joint mode), before correction/scaling. */
  readonly commandedTwist: Float64Array;
  /** The drift correction c = K·e after its TCP caps (zero when off). */
  readonly correctionTwist: Float64Array;
  /** The twist given to the DLS solve (command plus drift correction). */
  readonly solvedTwist: Float64Array;
  /** J·qdot with the applied qdot: the twist the arm actually makes (to first order). */
  readonly achievedTwist: Float64Array;
  tcpLinearSpeed: number;
  tcpAngularSpeed: number;
  /** TCP pose at the start of the step (where J and σ were evaluated). */
  readonly pose: Float64Array;
  /**
   * The joint positions `pose` was evaluated at (the first n of MAX_JOINTS numbers): a caller that needs the
   * TCP pose after a step (a recorder) takes it from the next step's report when these match, instead of
   * evaluating the forward kinematics again.
   */
  readonly poseJoints: Float64Array;
  driftPositionError: number;
  driftOrientationError: number;
  driftReset: boolean;
  sigmaIterations: number;
  sigmaFullDecomposition: boolean;
  fault: ControlFault;
  isDegenerate: boolean;
}

export interface ControlWorkspace {
  readonly n: number;
  readonly kernel: ArmKernel;
  readonly J: Float64Array;
  readonly G: Float64Array;
  readonly L: Float64Array;
  readonly y: Float64Array;
  readonly cmd: Float64Array;
  readonly solve: Float64Array;
  readonly err: Float64Array;
  readonly caps: Float64Array;
  readonly qPrev: Float64Array;
  readonly qTrial: Float64Array;
  readonly Jtrial: Float64Array;
  readonly Gtrial: Float64Array;
  readonly poseTrial: Float64Array;
  readonly margins: Float64Array;
  readonly zones: Float64Array;
  readonly bind: Int32Array;
  /** Scalars passed between hot-path functions without boxing (dt in, scale out). */
  readonly box: Float64Array;
  readonly lambdaBox: Float64Array;
  /** Acceleration-limited rates (blendRates): τ, f, p and f's binding joint; J·ws.next. */
  readonly blend: Float64Array;
  readonly blendTwist: Float64Array;
  /** damping.ts I/O: σ, w in; λ out. */
  readonly dampIo: Float64Array;
  readonly tracker: SigmaTracker;
  readonly trialTracker: SigmaTracker;
  /** The solve's joint rates (before limits) and the drift correction's share of them. */
  readonly target: Float64Array;
  readonly corrTarget: Float64Array;
  /** Joint rates after caps (s·target) and after the acceleration limit. */
  readonly scaled: Float64Array;
  readonly next: Float64Array;
  /** Acceleration limits of this step (params combined with the arm's rated values). */
  readonly accel: Float64Array;
  /** Right-hand side of the solve (solved twist − J·qdot0) and the correction's solve. */
  readonly rhs: Float64Array;
  readonly yc: Float64Array;
  /** Null-space drive qdot0 and its per-joint middle and weight (Δ̄/Δ_i)², 0 for joints without limits. */
  readonly qdot0: Float64Array;
  readonly nsMid: Float64Array;
  readonly nsWeight: Float64Array;
  /** Numerical filtering: directions (row j = direction j) and their λ; eigen-decomposition scratch. */
  readonly filterDirs: Float64Array;
  readonly filterLambdas: Float64Array;
  readonly eigValues: Float64Array;
  readonly eigVectors: Float64Array;
}

/** Preallocates everything one arm's control steps need. Validates the arm. */
export function createControlWorkspace(arm: ArmModel): ControlWorkspace {
  const kernel = compileArm(arm);
  const n = kernel.n;
  const k = Math.min(6, n);
  const nsMid = new Float64Array(n);
  const nsWeight = new Float64Array(n);
  // Liégeois 1977 weights (Δ̄/Δ_i)², Δ̄ the RMS half-range of the joints with finite limits.
  let sum = 0, count = 0;
  for (let i = 0; i < n; i++) {
    const half = (kernel.max[i]! - kernel.min[i]!) / 2;
    if (Number.isFinite(half) && half > 0) { sum += half * half; count++; }
  }
  const meanHalf2 = count > 0 ? sum / count : 0;
  for (let i = 0; i < n; i++) {
    const half = (kernel.max[i]! - kernel.min[i]!) / 2;
    if (Number.isFinite(half) && half > 0) {
      nsMid[i] = (kernel.max[i]! + kernel.min[i]!) / 2;
      nsWeight[i] = meanHalf2 / (half * half);
    }
  }
  return {
    n,
    kernel,
    J: new Float64Array(6 * n),
    G: new Float64Array(k * k),
    L: new Float64Array(k * k),
    y: new Float64Array(Math.max(6, n)),
    cmd: new Float64Array(6),
    solve: new Float64Array(6),
    err: new Float64Array(6),
    caps: new Float64Array(n),
    qPrev: new Float64Array(n),
    qTrial: new Float64Array(n),
    Jtrial: new Float64Array(6 * n),
    Gtrial: new Float64Array(k * k),
    poseTrial: new Float64Array(16),
    margins: new Float64Array(n),
    zones: new Float64Array(n),
    bind: new Int32Array(1),
    box: new Float64Array(1),
    lambdaBox: new Float64Array(1),
    blend: new Float64Array(4),
    blendTwist: new Float64Array(6),
    dampIo: new Float64Array(3),
    tracker: createSigmaTracker(k),
    trialTracker: createSigmaTracker(k),
    target: new Float64Array(n),
    corrTarget: new Float64Array(n),
    scaled: new Float64Array(n),
    next: new Float64Array(n),
    accel: new Float64Array(n),
    rhs: new Float64Array(6),
    yc: new Float64Array(Math.max(6, n)),
    qdot0: new Float64Array(n),
    nsMid,
    nsWeight,
    filterDirs: new Float64Array(k * k),
    filterLambdas: new Float64Array(k),
    eigValues: new Float64Array(k),
    eigVectors: new Float64Array(k * k),
  };
}

/**
 * A state at q0 (validated: n finite values within the arm's limits). The reference pose starts at the
 * pose of q0.
 */
export function createControlState(arm: ArmModel, q0: ArrayLike<number>): ControlState {
  validateArm(arm);
  const kernel = compileArm(arm);
  const n = kernel.n;
  requireFiniteVector(q0, n, "q0");
  for (let i = 0; i < n; i++) {
    const v = q0[i]!;
    if (v < kernel.min[i]! || v > kernel.max[i]!) {
      throw new KinematicsInputError(`q0[${i}]`, `${v} is outside the joint range [${kernel.min[i]}, ${kernel.max[i]}]`);
    }
  }
  const q = Float64Array.from(q0);
  const referencePose = forwardPoseInto(kernel, q, new Float64Array(16));
  return {
    n, q, qdot: new Float64Array(n), qdotCorrection: new Float64Array(n), referencePose,
    guardState: "off", singularityAcknowledged: false, isGuardHolding: false, time: 0, steps: 0,
  };
}

/** Sets the drift-correction reference to the current TCP pose (e.g. when jogging starts). */
export function resetReferencePose(ws: ControlWorkspace, state: ControlState): void {
  forwardPoseInto(ws.kernel, state.q, state.referencePose);
}

/** Moves the state to q (validated against the arm's limits), zeroes qdot and re-anchors the reference. */
export function setJointPositions(ws: ControlWorkspace, state: ControlState, q: ArrayLike<number>): void {
  requireFiniteVector(q, ws.n, "q");
  for (let i = 0; i < ws.n; i++) {
    if (q[i]! < ws.kernel.min[i]! || q[i]! > ws.kernel.max[i]!) {
      throw new KinematicsInputError(`q[${i}]`, `${q[i]} is outside the joint range`);
    }
  }
  state.q.set(q);
  state.qdot.fill(0);
  state.qdotCorrection.fill(0);
  resetReferencePose(ws, state);
  resetSigmaTracker(ws.tracker);
}

export function createControlReport(): ControlStepReport {
  return {
    mode: "cartesian",
    sigmaMin: 0, sigmaSecond: 0, manipulability: 0, lambda: 0, dampedDirections: 0, filterFullDecomposition: false,
    jointCapScale: 1, tcpLinearScale: 1, tcpAngularScale: 1, limitScale: 1, scale: 1,
    accelScale: 1, accelBindingJoint: -1, maxJointAccel: 0,
    binding: "none", bindingJoint: -1, guardState: "off",
    commandedTwist: new Float64Array(6), correctionTwist: new Float64Array(6), solvedTwist: new Float64Array(6),
    achievedTwist: new Float64Array(6),
    tcpLinearSpeed: 0, tcpAngularSpeed: 0, pose: new Float64Array(16), poseJoints: new Float64Array(MAX_JOINTS).fill(Number.NaN),
    driftPositionError: 0, driftOrientationError: 0, driftReset: false,
    sigmaIterations: 0, sigmaFullDecomposition: false, fault: "none", isDegenerate: false,
  };
}

/**
 * Sensible defaults (SI): singular-value schedule ε = 0.04, λmax = 0.04, 250 mm/s TCP cap (ISO
 * 10218-1:2011 reduced speed), 5° margin, no acceleration limit, no drift correction, no null-space term.
 */
export function defaultControlParams(): ControlParams {
  return {
    damping: { kind: "singular-value", epsilon: 0.04, lambdaMax: 0.04 },
    dampSmallestOnly: false,
    jointRateCaps: null,
    jointAccelLimits: null,
    tcpLinearCap: 0.25,
    tcpAngularCap: Math.PI / 2,
    jointLimitMargin: (5 * Math.PI) / 180,
    jointLimitSlowZone: (15 * Math.PI) / 180,
    guard: { policy: "damp-through", sigmaStop: 0.02, releaseFactor: 1.5 },
    driftCorrection: null,
    nullSpace: null,
    twistFrame: "world",
  };
}

function requireNonNegative(v: unknown, field: string, allowInfinity: boolean): void {
  if (typeof v !== "number" || Number.isNaN(v) || v < 0 || (!allowInfinity && v === Infinity)) {
    throw new KinematicsInputError(field, `must be a number ≥ 0${allowInfinity ? " (Infinity for none)" : ""}, got ${String(v)}`);
  }
}

function requirePerJoint(v: unknown, n: number, field: string, allowInfinity: boolean): void {
  if (typeof v === "number") return requireNonNegative(v, field, allowInfinity);
  if (!v || typeof v !== "object" || (v as ArrayLike<number>).length !== n) {
    throw new KinematicsInputError(field, `must be a number or ${n} numbers (one per joint)`);
  }
  for (let i = 0; i < n; i++) requireNonNegative((v as ArrayLike<number>)[i], `${field}[${i}]`, allowInfinity);
}

/**
 * Throws KinematicsInputError naming the field unless params suit an arm of n joints. Call at setup.
 * (K·dt ≤ 1 for the drift gain needs dt, so the step checks it and faults.)
 */
export function validateControlParams(params: unknown, n: number): asserts params is ControlParams {
  if (params === null || typeof params !== "object") throw new KinematicsInputError("params", "must be an object");
  const p = params as ControlParams;
  validateDampingScheme(p.damping, "damping");
  if (typeof p.dampSmallestOnly !== "boolean") throw new KinematicsInputError("dampSmallestOnly", "must be a boolean");
  if (p.jointRateCaps !== null) requirePerJoint(p.jointRateCaps, n, "jointRateCaps", true);
  if (p.jointAccelLimits !== null && p.jointAccelLimits !== undefined) {
    const a = p.jointAccelLimits as unknown;
    if (!a || typeof a !== "object" || (a as ArrayLike<number>).length !== n) {
      throw new KinematicsInputError("jointAccelLimits", `must be null or ${n} numbers (one per joint)`);
    }
    for (let i = 0; i < n; i++) {
      const v = (a as ArrayLike<number>)[i];
      if (typeof v !== "number" || !(v > 0)) {
        throw new KinematicsInputError(`jointAccelLimits[${i}]`, `must be a number > 0 (Infinity for none), got ${String(v)}`);
      }
    }
  }
  requireNonNegative(p.tcpLinearCap, "tcpLinearCap", true);
  requireNonNegative(p.tcpAngularCap, "tcpAngularCap", true);
  requirePerJoint(p.jointLimitMargin, n, "jointLimitMargin", false);
  requirePerJoint(p.jointLimitSlowZone, n, "jointLimitSlowZone", false);
  if (!p.guard || (p.guard.policy !== "damp-through" && p.guard.policy !== "stop-before")) {
    throw new KinematicsInputError("guard.policy", `must be "damp-through" or "stop-before"`);
  }
  requireNonNegative(p.guard.sigmaStop, "guard.sigmaStop", false);
  if (typeof p.guard.releaseFactor !== "number" || !(p.guard.releaseFactor >= 1) || !Number.isFinite(p.guard.releaseFactor)) {
    throw new KinematicsInputError("guard.releaseFactor", "must be a finite number ≥ 1");
  }
  if (p.driftCorrection !== null) {
    if (typeof p.driftCorrection !== "object") throw new KinematicsInputError("driftCorrection", "must be an object or null");
    requireNonNegative(p.driftCorrection.gain, "driftCorrection.gain", false);
    requireNonNegative(p.driftCorrection.maxPositionError, "driftCorrection.maxPositionError", true);
    requireNonNegative(p.driftCorrection.maxOrientationError, "driftCorrection.maxOrientationError", true);
  }
  if (p.nullSpace !== null && p.nullSpace !== undefined) {
    if (typeof p.nullSpace !== "object") throw new KinematicsInputError("nullSpace", "must be an object or null");
    requireNonNegative(p.nullSpace.gain, "nullSpace.gain", false);
  }
  if (p.twistFrame !== "world" && p.twistFrame !== "tool") {
    throw new KinematicsInputError("twistFrame", `must be "world" or "tool"`);
  }
}

function beginReport(report: ControlStepReport, mode: "cartesian" | "joint"): void {
  report.mode = mode;
  report.sigmaMin = 0; report.sigmaSecond = 0; report.manipulability = 0; report.lambda = 0;
  report.dampedDirections = 0; report.filterFullDecomposition = false;
  report.jointCapScale = 1; report.tcpLinearScale = 1; report.tcpAngularScale = 1; report.limitScale = 1;
  report.scale = 1; report.accelScale = 1; report.accelBindingJoint = -1; report.maxJointAccel = 0;
  report.binding = "none"; report.bindingJoint = -1;
  // Typed-array fields into locals once: V8 does not hoist the field loads out of a loop.
  const c = report.commandedTwist, v = report.solvedTwist, a = report.achievedTwist, e = report.correctionTwist;
  c[0] = 0; c[1] = 0; c[2] = 0; c[3] = 0; c[4] = 0; c[5] = 0;
  v[0] = 0; v[1] = 0; v[2] = 0; v[3] = 0; v[4] = 0; v[5] = 0;
  a[0] = 0; a[1] = 0; a[2] = 0; a[3] = 0; a[4] = 0; a[5] = 0;
  e[0] = 0; e[1] = 0; e[2] = 0; e[3] = 0; e[4] = 0; e[5] = 0;
  report.tcpLinearSpeed = 0; report.tcpAngularSpeed = 0;
  report.driftPositionError = 0; report.driftOrientationError = 0; report.driftReset = false;
  report.sigmaIterations = 0; report.sigmaFullDecomposition = false;
  report.fault = "none"; report.isDegenerate = false;
}

/** A degenerate case: qdot zeroed at once (a fault is not a controlled stop), q unchanged, fault named. */
function fail(state: ControlState, report: ControlStepReport, fault: ControlFault): ControlStepReport {
  state.qdot.fill(0);
  state.qdotCorrection.fill(0);
  report.scale = 0;
  report.achievedTwist.fill(0);
  report.tcpLinearSpeed = 0;
  report.tcpAngularSpeed = 0;
  report.fault = fault;
  report.isDegenerate = true;
  return report;
}

function validDt(dt: number): boolean {
  return dt > 0 && dt < Infinity;
}

function commandIsFinite(v: ArrayLike<number> | null | undefined, len: number): boolean {
  if (!v || v.length !== len) return false;
  for (let i = 0; i < len; i++) if (!Number.isFinite(v[i]!)) return false;
  return true;
}

/**
 * Evaluates J and the Gram matrix at state.q into the workspace and the TCP pose into the report (with the
 * joint positions it was evaluated at; σ follows in estimateSigma). False when q (or J) is not finite.
 */
function measure(ws: ControlWorkspace, state: ControlState, report: ControlStepReport): boolean {
  const n = ws.n;
  const q = state.q;
  for (let i = 0; i < n; i++) if (!Number.isFinite(q[i]!)) return false;
  // J, pose and G in one pass (jacobian.ts; bit-identical to geometricJacobianInto + gramInto).
  // The pose goes straight into the report, where the rest of the step reads it.
  const G = ws.G, pq = report.poseJoints;
  jacobianPoseGramInto(ws.kernel, q, ws.J, report.pose, G);
  for (let i = 0; i < n; i++) pq[i] = q[i]!;
  // A non-finite entry of J makes a diagonal entry of the Gram matrix (a sum of squares) non-finite.
  const k = ws.tracker.k;
  for (let i = 0; i < k; i++) if (!(G[i * k + i]! < Infinity)) return false;
  return true;
}

/**
 * The start of every step: a fresh report in `mode`, dt and the command (`length` numbers) checked, then
 * J, pose and G at state.q (measure). False after a fault, which the report names.
 */
function startStep(
  ws: ControlWorkspace, state: ControlState, report: ControlStepReport, mode: "cartesian" | "joint",
  command: ArrayLike<number>, length: number, dt: number,
): boolean {
  beginReport(report, mode);
  if (!validDt(dt)) fail(state, report, "invalid-dt");
  else if (!commandIsFinite(command, length)) fail(state, report, "invalid-command");
  else if (!measure(ws, state, report)) fail(state, report, "non-finite-result");
  else return true;
  return false;
}

/**
 * σ_min, w and the tracker's factor for the Gram matrix of measure(), into the report. With `rhs` (a
 * 6-row J with n ≥ 6, undamped solve possible), the estimator also solves (G + δI) ws.y = rhs with its
 * factor (estimateSigmaMinSolve6), valid when tracker.factorValid.
 */
function estimateSigma(ws: ControlWorkspace, report: ControlStepReport, rhs: Float64Array | null): void {
  const tracker = ws.tracker;
  if (rhs) estimateSigmaMinSolve6(tracker, ws.G, rhs, ws.y);
  else estimateSigmaMin(tracker, ws.G);
  report.sigmaMin = tracker.sigmaMin;
  report.sigmaSecond = tracker.sigmaSecond;
  report.manipulability = tracker.manipulability;
  report.sigmaIterations = tracker.iterations;
  report.sigmaFullDecomposition = tracker.usedFullDecomposition;
}

/**
 * ws.next = the joint rates of one step toward τ·target from state.qdot (τ = ws.blend[0]) within the
 * acceleration limits: Δ = τ·target − qdot, f from accelScaleInto (one factor, direction of the change
 * kept), next = qdot + f·Δ, then one factor p ≤ 1 so that next respects the joint-rate caps and the TCP
 * caps (the speed caps win over the acceleration limit; p < 1 only when J or the params changed since the
 * last step). Writes f, p, f's binding joint into ws.blend[1], [2], [3] and J·next into ws.blendTwist.
 * Numbers pass through ws.blend, not arguments: a computed number passed to a call V8 does not inline
 * is boxed. accelScaleInto and capScaleInto are written out here (the same operations in the same order,
 * so bit-identical), which lets two sweeps over the joints do the work of five.
 */
function blendRates(ws: ControlWorkspace, state: ControlState, params: ControlParams, dt: number): void {
  const n = ws.n;
  const prev = state.qdot, target = ws.target, scaled = ws.scaled, next = ws.next;
  const accel = ws.accel, caps = ws.caps, J = ws.J;
  const blend = ws.blend;
  const tau = blend[0]!;
  // Pass 1: scaled = τ·target and f of accelScaleInto (limits.ts), written out with its operations in its
  // order (NaN change: f = 0 and the rest skipped, as its `break`), so f and its joint are bit-identical.
  let f = 1;
  let fBind = -1;
  let fDone = false;
  for (let i = 0; i < n; i++) {
    const sc = tau * target[i]!;
    scaled[i] = sc;
    if (fDone) continue;
    const d = Math.abs(sc - prev[i]!);
    if (Number.isNaN(d)) {
      f = 0;
      fBind = i;
      fDone = true;
      continue;
    }
    const step = accel[i]! * dt;
    if (d * f > step) {
      f = step / d;
      fBind = i;
    }
  }
  // Pass 2: next = qdot + f·(scaled − qdot), its cap factor (capScaleInto's operations, NaN: 0) and J·next
  // (each row sum over the columns in order, as row by row), in one sweep over the joints.
  let pScale = 1;
  let pDone = false;
  let a0 = 0, a1 = 0, a2 = 0, a3 = 0, a4 = 0, a5 = 0;
  const n2 = 2 * n, n3 = 3 * n, n4 = 4 * n, n5 = 5 * n;
  for (let c = 0; c < n; c++) {
    const p = prev[c]!;
    const x = p + f * (scaled[c]! - p);
    next[c] = x;
    if (!pDone) {
      const v = Math.abs(x);
      const cap = caps[c]!;
      if (Number.isNaN(v)) {
        pScale = 0;
        pDone = true;
      } else if (v * pScale > cap) {
        pScale = cap / v;
      }
    }
    a0 += J[c]! * x; a1 += J[n + c]! * x; a2 += J[n2 + c]! * x;
    a3 += J[n3 + c]! * x; a4 += J[n4 + c]! * x; a5 += J[n5 + c]! * x;
  }
  // The scratch cells as the separate calls left them (f's joint, the cap factor); nothing reads them
  // before writing, but the workspace stays the same either way.
  ws.bind[0] = fBind;
  ws.box[0] = pScale;
  const lin = Math.sqrt(a0 * a0 + a1 * a1 + a2 * a2);
  const ang = Math.sqrt(a3 * a3 + a4 * a4 + a5 * a5);
  if (lin * pScale > params.tcpLinearCap) pScale = params.tcpLinearCap / lin;
  if (ang * pScale > params.tcpAngularCap) pScale = params.tcpAngularCap / ang;
  if (pScale < 1) for (let i = 0; i < n; i++) next[i] = next[i]! * pScale;
  const t = ws.blendTwist;
  t[0] = a0 * pScale; t[1] = a1 * pScale; t[2] = a2 * pScale; t[3] = a3 * pScale; t[4] = a4 * pScale; t[5] = a5 * pScale;
  blend[1] = f;
  blend[2] = pScale;
  blend[3] = fBind;
}

/**
 * True when ws.next, braked from the next step on by one factor within the limits, stops every joint
 * before its stand-off (limits.ts stoppingHorizonInto, stopsBeforeStandOffs); ws.bind[0] = the joint.
 * `isStrict` (a new motion, not braking): the horizon is lengthened by 1e-9 so that the candidate keeps
 * that much slack, far above rounding, and braking from it next step passes the plain test (derived: the
 * horizon is self-consistent only up to rounding, and the search below finds candidates at the edge).
 */
function canStopInTime(ws: ControlWorkspace, state: ControlState, dt: number, isStrict: boolean): boolean {
  const box = ws.box;
  box[0] = dt;
  stoppingHorizonInto(ws.next, ws.accel, ws.n, box);
  if (isStrict) box[0] = box[0]! * (1 + 1e-9);
  return stopsBeforeStandOffs(state.q, ws.next, ws.kernel.min, ws.kernel.max, ws.margins, ws.n, box, ws.bind);
}

/**
 * The rates this step applies with acceleration limits, into ws.next: the blend toward s·target (s =
 * report.scale; 0 when `isBraking`), accepted only if the arm can still stop before every joint-limit
 * stand-off by braking the whole vector by one factor (canStopInTime). Otherwise a smaller τ ∈ [0, s) is
 * found by bisection (τ = 0 is braking, which is always in time when the previous step was — the horizon
 * is self-consistent), and s is lowered to it with binding "joint-limit". If even braking cannot stop in
 * time (the params changed, or the arm started too close), brakingFloorInto raises f for the joints that
 * would not stop: the joint limit wins over the acceleration limit. Writes the achieved twist J·next, the
 * TCP speeds and f into the report, the applied τ into ws.blend[0] and p into ws.blend[2].
 */
function accelLimitedRates(
  ws: ControlWorkspace, state: ControlState, params: ControlParams, dt: number, report: ControlStepReport,
  isBraking: boolean,
): void {
  const n = ws.n;
  const blend = ws.blend;
  const tau0 = isBraking ? 0 : report.scale;
  blend[0] = tau0;
  blendRates(ws, state, params, dt);
  if (!canStopInTime(ws, state, dt, !isBraking)) {
    let failJoint = ws.bind[0]!;
    let lo = 0, hi = tau0;
    if (tau0 > 0) {
      // The largest τ found in 24 halvings (to 6e-8·s; the test is not monotonic in τ in general, but any τ
      // that passes is in time).
      for (let it = 0; it < 24; it++) {
        blend[0] = 0.5 * (lo + hi);
        blendRates(ws, state, params, dt);
        if (canStopInTime(ws, state, dt, true)) lo = blend[0]!;
        else { hi = blend[0]!; failJoint = ws.bind[0]!; }
      }
      blend[0] = lo;
      blendRates(ws, state, params, dt);
    }
    if (!isBraking) {
      report.scale = lo;
      report.binding = "joint-limit";
      report.bindingJoint = failJoint;
    }
    if (lo === 0 && !canStopInTime(ws, state, dt, false)) {
      // Last resort: more deceleration than the limit for the joints that would not stop in time.
      const box = ws.box, kernel = ws.kernel, prev = state.qdot, scaled = ws.scaled, next = ws.next;
      box[0] = dt;
      brakingFloorInto(state.q, prev, scaled, kernel.min, kernel.max, ws.margins, ws.accel, n, box, null);
      const floor = box[0]!;
      if (floor > blend[1]!) {
        const pScale = blend[2]!;
        for (let i = 0; i < n; i++) {
          const p = prev[i]!;
          next[i] = (p + floor * (scaled[i]! - p)) * pScale;
        }
        blend[1] = floor;
        blend[3] = -1;
        // J·next for the report.
        const J = ws.J, t = ws.blendTwist;
        for (let r = 0; r < 6; r++) {
          let acc = 0;
          for (let c = 0; c < n; c++) acc += J[r * n + c]! * next[c]!;
          t[r] = acc;
        }
      }
    }
  }
  const t = ws.blendTwist, a = report.achievedTwist;
  const a0 = t[0]!, a1 = t[1]!, a2 = t[2]!, a3 = t[3]!, a4 = t[4]!, a5 = t[5]!;
  a[0] = a0; a[1] = a1; a[2] = a2; a[3] = a3; a[4] = a4; a[5] = a5;
  report.tcpLinearSpeed = Math.sqrt(a0 * a0 + a1 * a1 + a2 * a2);
  report.tcpAngularSpeed = Math.sqrt(a3 * a3 + a4 * a4 + a5 * a5);
  const f = blend[1]!;
  report.accelScale = f;
  report.accelBindingJoint = f < 1 ? blend[3]! : -1;
}

/**
 * Scales the solve's rates (ws.target) by the one common factor of caps, TCP caps and joint limits,
 * applies the acceleration limit and (Cartesian mode) the singularity guard, integrates, and fills the
 * report. `guarded`: apply the singularity guard. `hasCorrection`: ws.corrTarget holds the drift
 * correction's share of ws.target.
 */
function limitAndIntegrate(
  ws: ControlWorkspace, state: ControlState, params: ControlParams, dt: number, report: ControlStepReport,
  guarded: boolean, hasCorrection: boolean,
): void {
  const n = ws.n;
  const k = ws.kernel;
  const target = ws.target;
  const prev = state.qdot;
  const q = state.q;
  const J = ws.J;
  const qMin = k.min, qMax = k.max;
  const accelLimits = params.jointAccelLimits;
  const isAccel = accelLimits !== null && accelLimits !== undefined;
  // One sweep over the joints: this step's caps, margins, zones and acceleration limits (loadJointLimits,
  // written out), the joint-rate cap factor of the solve's rates (limits.ts capScaleInto's operations in
  // its order; NaN: 0 and the rest skipped, as its `break`), whether anything moves and J·target
  // (each row sum over the columns in order) — the same numbers as the separate passes, bit for bit.
  const caps = ws.caps, margins = ws.margins, zones = ws.zones, accel = ws.accel;
  const maxSpeed = k.maxSpeed, rated = k.maxAccel;
  const userCaps = params.jointRateCaps;
  const margin = params.jointLimitMargin, zone = params.jointLimitSlowZone;
  const isMarginNumber = typeof margin === "number", isZoneNumber = typeof zone === "number";
  let sJoint = 1;
  let jointBind = -1;
  let capDone = false;
  // NaN in the target (never from the solve, whose result is checked finite) counts as moving.
  let moving = false;
  let a0 = 0, a1 = 0, a2 = 0, a3 = 0, a4 = 0, a5 = 0;
  const n2 = 2 * n, n3 = 3 * n, n4 = 4 * n, n5 = 5 * n;
  for (let i = 0; i < n; i++) {
    const ms = maxSpeed[i]!;
    let cap = ms;
    if (userCaps) {
      const c = userCaps[i]!;
      cap = c < ms ? c : ms;
    }
    caps[i] = cap;
    // Written out, not TypedArray.fill: passing the number to a builtin would box it (an allocation).
    margins[i] = isMarginNumber ? margin : (margin as ArrayLike<number>)[i]!;
    zones[i] = isZoneNumber ? zone : (zone as ArrayLike<number>)[i]!;
    if (isAccel) {
      const a = accelLimits[i]!;
      const r = rated[i]!;
      accel[i] = a < r ? a : r;
    }
    const x = target[i]!;
    if (x !== 0) moving = true;
    if (!capDone) {
      const v = Math.abs(x);
      if (Number.isNaN(v)) {
        sJoint = 0;
        jointBind = i;
        capDone = true;
      } else if (v * sJoint > cap) {
        sJoint = cap / v;
        jointBind = i;
      }
    }
    a0 += J[i]! * x; a1 += J[n + i]! * x; a2 += J[n2 + i]! * x;
    a3 += J[n3 + i]! * x; a4 += J[n4 + i]! * x; a5 += J[n5 + i]! * x;
  }
  // Joint-limit slow-down (limits.ts jointLimitScaleInto).
  const box = ws.box, bind = ws.bind;
  box[0] = dt;
  jointLimitScaleInto(q, target, qMin, qMax, caps, n, margins, zones, box, bind, isAccel ? accel : null);
  const sLimit = box[0]!;
  const limitBind = bind[0]!;
  // Achieved twist with the unscaled target; it scales linearly with s.
  const lin = Math.sqrt(a0 * a0 + a1 * a1 + a2 * a2);
  const ang = Math.sqrt(a3 * a3 + a4 * a4 + a5 * a5);
  const linCap = params.tcpLinearCap, angCap = params.tcpAngularCap;
  const sLin = lin > linCap ? linCap / lin : 1;
  const sAng = ang > angCap ? angCap / ang : 1;

  let s = 1;
  let binding: BindingLimit = "none";
  let bindingJoint = -1;
  if (sJoint < s) { s = sJoint; binding = "joint-rate"; bindingJoint = jointBind; }
  if (sLin < s) { s = sLin; binding = "tcp-linear"; bindingJoint = -1; }
  if (sAng < s) { s = sAng; binding = "tcp-angular"; bindingJoint = -1; }
  if (sLimit < s) { s = sLimit; binding = "joint-limit"; bindingJoint = limitBind; }
  report.jointCapScale = sJoint;
  report.tcpLinearScale = sLin;
  report.tcpAngularScale = sAng;
  report.limitScale = sLimit;

  // The rates this step would apply: s·target, or with acceleration limits the limited change toward it.
  report.scale = s;
  report.binding = binding;
  report.bindingJoint = bindingJoint;
  if (isAccel) {
    accelLimitedRates(ws, state, params, dt, report, false);
    s = report.scale; // lowered when the arm could not otherwise stop before a joint limit
    binding = report.binding;
    bindingJoint = report.bindingJoint;
  }

  // Singularity guard: it acts on Cartesian motion only (`guarded`), but a hold's need for an
  // acknowledgement outlasts any step until it is given or the arm is out of the guard zone.
  const guard = params.guard;
  if (guard.policy === "damp-through") {
    state.guardState = "off";
    state.singularityAcknowledged = false;
    state.isGuardHolding = false;
  } else {
    const sigma = report.sigmaMin;
    if (sigma >= guard.sigmaStop * guard.releaseFactor) {
      // Out of the guard zone: a passage is over (the next approach stops again), a hold is owed nothing.
      state.singularityAcknowledged = false;
      state.isGuardHolding = false;
    }
    if (state.singularityAcknowledged) {
      state.isGuardHolding = false;
      state.guardState = "acknowledged";
    } else if (!guarded) {
      // A joint step (joint jog, or the ramp of a controlled stop): no coordinated motion to check.
      state.guardState = state.isGuardHolding ? "stopped" : "off";
    } else if (!moving || s === 0) {
      // Nothing commanded (or already held by a limit): the arm is at rest or braking, nothing to check.
      state.guardState = state.isGuardHolding ? "stopped" : sigma < guard.sigmaStop ? "backing-out" : "clear";
    } else {
      // Evaluate σ_min where the arm would come to rest: this step, then a stop by one factor within the
      // acceleration limits, q + r·H with H the stopping horizon (limits.ts stoppingHorizonInto; H = dt
      // without limits, the old one-step look-ahead). The joints move on a straight line in joint space
      // while braking; σ_min is checked at its end (σ_min along so short a line is taken as monotonic).
      const qTrial = ws.qTrial;
      if (isAccel) {
        const r = ws.next;
        box[0] = dt;
        stoppingHorizonInto(r, ws.accel, n, box);
        const h = box[0]!;
        for (let i = 0; i < n; i++) qTrial[i] = q[i]! + r[i]! * h;
      } else {
        for (let i = 0; i < n; i++) qTrial[i] = q[i]! + s * target[i]! * dt;
      }
      jacobianPoseGramInto(k, qTrial, ws.Jtrial, ws.poseTrial, ws.Gtrial);
      copySigmaTracker(ws.tracker, ws.trialTracker);
      estimateSigmaMin(ws.trialTracker, ws.Gtrial);
      const sigmaNext = ws.trialTracker.sigmaMin;
      // Approaching: stop when the stop would end below σ_stop; once stopped, every approach is held (no
      // creeping on at the threshold) until the operator acknowledges or backs out of the zone.
      if (sigmaNext < sigma && (state.isGuardHolding || sigmaNext < guard.sigmaStop)) {
        s = 0;
        binding = "singularity-guard";
        bindingJoint = -1;
        state.guardState = "stopped";
        state.isGuardHolding = true;
        if (isAccel) accelLimitedRates(ws, state, params, dt, report, true); // brake within the limits
      } else {
        state.guardState = state.isGuardHolding || sigma < guard.sigmaStop || sigmaNext < guard.sigmaStop ? "backing-out" : "clear";
      }
    }
  }
  report.guardState = state.guardState;

  report.scale = s;
  report.binding = binding;
  report.bindingJoint = bindingJoint;
  const corr = state.qdotCorrection, corrTarget = ws.corrTarget;
  if (!isAccel) {
    const a = report.achievedTwist;
    a[0] = a0 * s; a[1] = a1 * s; a[2] = a2 * s; a[3] = a3 * s; a[4] = a4 * s; a[5] = a5 * s;
    report.tcpLinearSpeed = lin * s;
    report.tcpAngularSpeed = ang * s;
  }

  // Integrate (explicit Euler) with a final guard against stepping past a limit through rounding.
  const qPrev = ws.qPrev;
  for (let i = 0; i < n; i++) qPrev[i] = q[i]!;
  let finite = true;
  let maxAcc = 0;
  const next = ws.next;
  const f = report.accelScale, p = ws.blend[2]!;
  for (let i = 0; i < n; i++) {
    const v = isAccel ? next[i]! : target[i]! * s;
    const acc = Math.abs(v - prev[i]!);
    if (acc > maxAcc) maxAcc = acc;
    prev[i] = v;
    // The correction's share follows the same blend (zero without drift correction).
    if (!hasCorrection) corr[i] = 0;
    else if (isAccel) { const c0 = corr[i]!; corr[i] = (c0 + f * (s * corrTarget[i]! - c0)) * p; }
    else corr[i] = corrTarget[i]! * s;
    const q0 = q[i]!;
    let q1 = q0 + v * dt;
    const hi = qMax[i]!, lo = qMin[i]!;
    if (q1 > hi && q1 > q0) q1 = q0 > hi ? q0 : hi;
    if (q1 < lo && q1 < q0) q1 = q0 < lo ? q0 : lo;
    if (!Number.isFinite(q1) || !Number.isFinite(v)) finite = false;
    q[i] = q1;
  }
  report.maxJointAccel = maxAcc / dt;
  if (!finite) {
    q.set(qPrev);
    fail(state, report, "non-finite-result");
    return;
  }
  state.time += dt;
  state.steps++;
}

/**
 * Numerical filtering (Maciejewski & Klein 1988), extended to every direction whose σ is below ε: the
 * two tracked directions of the σ estimator, each damped with the schedule's λ at its own σ (damping.ts);
 * when the second is below ε too and a third may be (the bound below cannot exclude it), the full
 * eigen-decomposition of G decides. Solves into ws.target with the factor in ws.L. False on a singular solve.
 */
function filteredSolve(ws: ControlWorkspace, params: ControlParams, report: ControlStepReport, rhs: Float64Array): boolean {
  const lambda = report.lambda; // read here: a number passed to a call V8 does not inline would be boxed
  const n = ws.n;
  const tracker = ws.tracker;
  const k = tracker.k;
  const scheme = params.damping;
  const G = ws.G;
  const sigma1 = report.sigmaMin;
  // Region width ε: only the singular-value schedule has one. Without it (fixed λ, manipulability) every
  // direction counts as small, i.e. full DLS — the cautious reading. NaN σ: damp everything (λmax).
  const eps = scheme.kind === "singular-value" ? scheme.epsilon : Infinity;
  if (eps === Infinity || Number.isNaN(sigma1)) {
    ws.lambdaBox[0] = lambda;
    report.dampedDirections = lambda > 0 ? k : 0;
    return dlsFromGramBoxed(ws.J, 6, n, G, rhs, ws.lambdaBox, null, ws.L, ws.y, ws.target);
  }
  const dirs = ws.filterDirs, lambdas = ws.filterLambdas, io = ws.dampIo;
  let count = 0;
  if (sigma1 < eps) {
    const sigma2 = tracker.sigmaSecond;
    let useFull = false;
    if (k >= 3 && sigma2 < eps) {
      // A third singular value σ_3 may be below ε too. The k − 2 largest eigenvalues μ_i = σ_i² of G have
      // product P = w²/(μ_1 μ_2) and sum S = trace G − μ_1 − μ_2, each at most S, so the smallest of them is
      // at least P/S^(k−3) (derived). Only when that bound is above ε² (1 % margin for the estimate's
      // accuracy) are the two tracked directions all there is to damp.
      const mu1 = sigma1 * sigma1, mu2 = sigma2 * sigma2;
      let trace = 0;
      for (let i = 0; i < k; i++) trace += G[i * k + i]!;
      const w = tracker.manipulability;
      const P = mu1 > 0 && mu2 > 0 ? (w * w) / (mu1 * mu2) : 0;
      const S = trace - mu1 - mu2;
      let Sp = 1;
      for (let i = 3; i < k; i++) Sp *= S;
      useFull = !(P >= 1.01 * eps * eps * Sp);
    }
    if (useFull) {
      // All singular directions from the full decomposition (the tracker's own when it just made one).
      let values = ws.eigValues, vectors = ws.eigVectors;
      if (tracker.usedFullDecomposition) { values = tracker.eigValues; vectors = tracker.eigVectors; }
      else symmetricEigenInto(G, k, values, vectors);
      report.filterFullDecomposition = true;
      for (let c = 0; c < k; c++) {
        const sc = Math.sqrt(Math.max(0, values[c]!));
        if (!(sc < eps)) continue;
        for (let i = 0; i < k; i++) dirs[count * k + i] = vectors[i * k + c]!;
        io[0] = sc; io[1] = report.manipulability;
        dampingForSchemeInto(scheme, io);
        lambdas[count] = io[2]!;
        count++;
      }
    } else {
      const x1 = tracker.x1;
      for (let i = 0; i < k; i++) dirs[i] = x1[i]!;
      lambdas[0] = lambda;
      count = 1;
      if (k >= 2 && sigma2 < eps) {
        const x2 = tracker.x2;
        for (let i = 0; i < k; i++) dirs[k + i] = x2[i]!;
        io[0] = sigma2; io[1] = report.manipulability;
        dampingForSchemeInto(scheme, io);
        lambdas[1] = io[2]!;
        count = 2;
      }
    }
  }
  let damped = 0;
  for (let d = 0; d < count; d++) if (lambdas[d]! > 0) damped++;
  report.dampedDirections = damped;
  return dlsFilteredFromGramInto(ws.J, 6, n, G, rhs, dirs, lambdas, count, ws.L, ws.y, ws.target);
}

/**
 * One Cartesian jog step: twist [vx, vy, vz, wx, wy, wz] (world or tool frame per params.twistFrame)
 * held for dt seconds. Updates state.q, state.qdot, state.referencePose and the guard; fills and returns
 * `report`. Never throws; params are assumed checked with validateControlParams at setup.
 */
export function controlStep(
  ws: ControlWorkspace, state: ControlState, params: ControlParams, twist: ArrayLike<number>, dt: number,
  report: ControlStepReport,
): ControlStepReport {
  if (!startStep(ws, state, report, "cartesian", twist, 6, dt)) return report;
  const n = ws.n;
  const cmd = ws.cmd;
  const pose = report.pose;
  const J = ws.J;
  if (params.twistFrame === "tool") toolTwistToWorldInto(pose, twist, cmd);
  else {
    cmd[0] = twist[0]!; cmd[1] = twist[1]!; cmd[2] = twist[2]!;
    cmd[3] = twist[3]!; cmd[4] = twist[4]!; cmd[5] = twist[5]!;
  }
  // Drift correction: v = v_cmd + c, c = K·e capped by the TCP caps (CLIK).
  const v = ws.solve;
  const ct = report.commandedTwist;
  const c0 = cmd[0]!, c1 = cmd[1]!, c2 = cmd[2]!, c3 = cmd[3]!, c4 = cmd[4]!, c5 = cmd[5]!;
  ct[0] = c0; ct[1] = c1; ct[2] = c2; ct[3] = c3; ct[4] = c4; ct[5] = c5;
  v[0] = c0; v[1] = c1; v[2] = c2; v[3] = c3; v[4] = c4; v[5] = c5;
  const drift = params.driftCorrection;
  const ref = state.referencePose;
  const isDrift = drift !== null && drift !== undefined && drift.gain > 0;
  const corr = report.correctionTwist;
  if (isDrift) {
    const kdt = drift.gain * dt;
    if (!(kdt <= 1)) {
      estimateSigma(ws, report, null); // as before: σ is reported and the tracker advances
      return fail(state, report, "unstable-drift-gain");
    }
    const e = poseErrorInto(pose, ref, ws.err);
    let ep = Math.sqrt(e[0]! * e[0]! + e[1]! * e[1]! + e[2]! * e[2]!);
    let eo = Math.sqrt(e[3]! * e[3]! + e[4]! * e[4]! + e[5]! * e[5]!);
    if (ep > drift.maxPositionError || eo > drift.maxOrientationError || !Number.isFinite(ep + eo)) {
      ref.set(pose);
      e.fill(0);
      ep = 0;
      eo = 0;
      report.driftReset = true;
    }
    report.driftPositionError = ep;
    report.driftOrientationError = eo;
    // The correction is itself held under the TCP caps, by one factor (keeps its direction).
    const K = drift.gain;
    let fc = 1;
    if (K * ep > params.tcpLinearCap) fc = params.tcpLinearCap / (K * ep);
    if (K * eo * fc > params.tcpAngularCap) fc = params.tcpAngularCap / (K * eo);
    for (let i = 0; i < 6; i++) {
      const c = K * e[i]! * fc;
      corr[i] = c;
      v[i] = v[i]! + c;
    }
  } else {
    for (let i = 0; i < 16; i++) ref[i] = pose[i]!;
  }
  const sv = report.solvedTwist;
  for (let i = 0; i < 6; i++) sv[i] = v[i]!;

  // Null-space drive (n > 6): qdot = J⁺(v − J·qdot0) + qdot0 = J⁺v + (I − J⁺J)·qdot0 with the same
  // damped J⁺ (Liégeois 1977), so one solve covers both. Only while a twist is commanded: the arm never
  // moves by itself at rest (a zero command means no motion, as without the term).
  const ns = params.nullSpace;
  const isNullSpace = n > 6 && ns !== null && ns !== undefined && ns.gain > 0 &&
    (cmd[0] !== 0 || cmd[1] !== 0 || cmd[2] !== 0 || cmd[3] !== 0 || cmd[4] !== 0 || cmd[5] !== 0);
  let rhs = v;
  if (isNullSpace) {
    const q = state.q, qdot0 = ws.qdot0, mid = ws.nsMid, weight = ws.nsWeight;
    const gain = ns.gain;
    for (let i = 0; i < n; i++) qdot0[i] = -gain * (q[i]! - mid[i]!) * weight[i]!;
    const r = ws.rhs;
    for (let row = 0; row < 6; row++) {
      let acc = 0;
      for (let c = 0; c < n; c++) acc += J[row * n + c]! * qdot0[c]!;
      r[row] = v[row]! - acc;
    }
    rhs = r;
  }

  // σ_min and w. When the step may end up undamped (λ = 0 possible: not numerical filtering, not a fixed
  // λ > 0) and J has 6 rows with n ≥ 6, the estimator also solves (G + δI) y = rhs with its factor, the
  // first half of the undamped DLS, while the factor is in registers.
  const scheme = params.damping;
  const filtering = params.dampSmallestOnly;
  const speculate = n >= 6 && !filtering && !(scheme.kind === "fixed" && scheme.lambda !== 0);
  estimateSigma(ws, report, speculate ? rhs : null);

  // Damping λ (damping.ts; one answer for every path, λmax for a NaN σ).
  const io = ws.dampIo;
  io[0] = report.sigmaMin;
  io[1] = report.manipulability;
  dampingForSchemeInto(scheme, io);
  const lambda = io[2]!;
  if (!(lambda >= 0 && lambda < Infinity)) return fail(state, report, "invalid-params");
  report.lambda = lambda;
  let ok: boolean;
  const tracker = ws.tracker;
  let L = ws.L;
  if (filtering) {
    ok = filteredSolve(ws, params, report, rhs);
  } else if (lambda === 0 && tracker.factorValid) {
    // Undamped: reuse the estimator's factor of G + δI (δ ≈ 1e-14·trace G, a relative change of
    // δ/σ_min² in qdot — below 1e-6 whenever σ_min > 1e-4·σ_max). With `speculate` the estimator has
    // already solved for y (bit-identical to dlsSolveWithFactor's solve); only qdot = Jᵀ y is left.
    L = tracker.L;
    ok = speculate ? jtY6Into(J, n, ws.y, ws.target) : dlsSolveWithFactor(J, 6, n, L, rhs, ws.y, ws.target);
  } else {
    ws.lambdaBox[0] = lambda;
    report.dampedDirections = lambda > 0 ? tracker.k : 0;
    ok = dlsFromGramBoxed(J, 6, n, ws.G, rhs, ws.lambdaBox, null, L, ws.y, ws.target);
  }
  if (!ok) return fail(state, report, "singular-solve");
  if (isNullSpace) {
    const target = ws.target, qdot0 = ws.qdot0;
    for (let i = 0; i < n; i++) target[i] = target[i]! + qdot0[i]!;
  }
  if (isDrift) {
    // The correction's own share of the rates, J⁺c with the same factor (the solve is linear in v).
    if (!dlsSolveWithFactor(J, 6, n, L, corr, ws.yc, ws.corrTarget)) return fail(state, report, "singular-solve");
  }

  limitAndIntegrate(ws, state, params, dt, report, true, isDrift);
  if (report.isDegenerate) return report;
  if (isDrift) {
    // The reference advances by the achieved twist of the command: J·(qdot − the correction's share).
    const err = ws.err, qdot = state.qdot, share = state.qdotCorrection;
    for (let r = 0; r < 6; r++) {
      let acc = 0;
      for (let c = 0; c < n; c++) acc += J[r * n + c]! * (qdot[c]! - share[c]!);
      err[r] = acc;
    }
    advancePoseInPlace(ref, err, dt);
  }
  return report;
}

/**
 * One joint-jog step: the caller's joint rates (n numbers, rad/s or m/s) held for dt, under the same caps,
 * acceleration limit, TCP speed check via J·qdot (METHODS.md §7 design note) and joint-limit slow-down.
 * The singularity guard does not apply (no coordinated motion). The drift reference follows the pose.
 * Never throws.
 */
export function jointJogStep(
  ws: ControlWorkspace, state: ControlState, params: ControlParams, jointRates: ArrayLike<number>, dt: number,
  report: ControlStepReport,
): ControlStepReport {
  if (!startStep(ws, state, report, "joint", jointRates, ws.n, dt)) return report;
  estimateSigma(ws, report, null);
  const n = ws.n;
  const target = ws.target, J = ws.J, ct = report.commandedTwist, sv = report.solvedTwist;
  for (let i = 0; i < n; i++) target[i] = jointRates[i]!;
  for (let r = 0; r < 6; r++) {
    let s = 0;
    for (let c = 0; c < n; c++) s += J[r * n + c]! * jointRates[c]!;
    ct[r] = s;
    sv[r] = s;
  }
  limitAndIntegrate(ws, state, params, dt, report, false, false);
  forwardPoseInto(ws.kernel, state.q, state.referencePose);
  return report;
}
