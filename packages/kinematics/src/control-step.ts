/**
 * One resolved-rate control step (PRODUCT.md "The control step", steps 3–8; input shaping and gating,
 * steps 1–2, are the caller's). Units: SI throughout — m, rad, s; twists [m/s, rad/s]; joint rates rad/s
 * (m/s for prismatic joints); σ and λ in the units of J (m and rad mixed, METHODS.md §3).
 *
 * Cartesian step (controlStep):
 *  1. J, the TCP pose and the Gram matrix at q (jacobianPoseGramInto, one fused pass).
 *  2. Command into the world frame (tool-frame twists rotated by the TCP rotation); optional drift
 *     correction adds K·e, e the pose error to a reference pose (closed-loop inverse kinematics,
 *     Siciliano et al. 2009 sect. 3.7 — from memory; stable for 0 < K·dt < 2, METHODS.md §6 derived).
 *  3. σ_min and w = sqrt(det J Jᵀ) (Yoshikawa 1985) by the warm-started estimator of sigma-estimate.ts.
 *  4. λ from the damping scheme (damping.ts).
 *  5. qdot = Jᵀ(J Jᵀ + λ²I)⁻¹ v, or numerical filtering of the smallest direction only (dls.ts).
 *  6. One scale factor s = min(joint-rate caps, TCP linear cap, TCP angular cap, joint-limit slow-down)
 *     applied to the whole qdot, so J·qdot keeps its direction (limits.ts).
 *  7. Singularity guard "stop-before": when the step would take σ_min below the threshold and deeper than
 *     it is now, the arm holds (s = 0) until the operator acknowledges; motion that raises σ_min (backing
 *     out) is always allowed. The stop-and-warn rule for coordinated motion near a singularity follows the
 *     manual-mode singularity clause of ISO 10218-1 (from memory — clause not verified).
 *  8. q += qdot·dt (explicit Euler, Whitney 1969).
 * Never throws and never allocates: a degenerate case zeroes qdot, leaves q unchanged and is named in
 * report.fault.
 */

import type { ArmKernel, ArmModel } from "./arm.ts";
import { KinematicsInputError, compileArm, requireFiniteVector, validateArm } from "./arm.ts";
import type { DampingScheme } from "./damping.ts";
import { validateDampingScheme } from "./damping.ts";
import { dlsFromGramBoxed, dlsSolveWithFactor, jtY6Into } from "./dls.ts";
import { jacobianPoseGramInto } from "./jacobian.ts";
import { forwardPoseInto } from "./pose.ts";
import type { SigmaTracker } from "./sigma-estimate.ts";
import {
  copySigmaTracker, createSigmaTracker, estimateSigmaMin, estimateSigmaMinSolve6, resetSigmaTracker,
} from "./sigma-estimate.ts";
import { advancePoseInPlace, poseErrorInto, toolTwistToWorldInto } from "./twist.ts";

export type GuardPolicy = "damp-through" | "stop-before";

export interface SingularityGuardParams {
  policy: GuardPolicy;
  /** "stop-before": hold when the next step would bring σ_min below this (units of σ). */
  sigmaStop: number;
  /**
   * An acknowledgement lapses once σ_min is back above releaseFactor·sigmaStop (≥ 1), so the next
   * approach stops again.
   */
  releaseFactor: number;
}

export interface DriftCorrectionParams {
  /** K [1/s]; the step faults with "unstable-drift-gain" unless 0 ≤ K·dt < 2. */
  gain: number;
  /** When the position error exceeds this [m] the reference is re-anchored to the current pose. */
  maxPositionError: number;
  /** Same for the orientation error |e_O| = sin(angle) [dimensionless, ≈ rad]. */
  maxOrientationError: number;
}

/** Tuning of one control step. SI units. Read every step (may change between steps); never mutated. */
export interface ControlParams {
  damping: DampingScheme;
  /** Damp only the smallest singular direction (numerical filtering, Maciejewski & Klein 1988). */
  dampSmallestOnly: boolean;
  /** Per-joint rate caps [rad/s or m/s], combined with the arm's maxSpeed (the smaller wins); null: arm only. */
  jointRateCaps: ArrayLike<number> | null;
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
  /** Frame of the commanded twist: "world" (base) or "tool" (rotated into world by the TCP rotation). */
  twistFrame: "world" | "tool";
}

export type BindingLimit =
  | "none" | "joint-rate" | "tcp-linear" | "tcp-angular" | "joint-limit" | "singularity-guard";

/**
 * "off": policy damp-through (or joint jog). "clear": no hold. "stopped": held before the singular region,
 * waiting for an acknowledgement or a motion away. "backing-out": inside the region, moving out.
 * "acknowledged": the operator acknowledged; damping through.
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
  /** Joint rates applied by the last step [rad/s or m/s]. */
  readonly qdot: Float64Array;
  /** Reference TCP pose for drift correction (4x4 row-major); advanced by the scaled command. */
  readonly referencePose: Float64Array;
  guardState: GuardState;
  /** Set by the caller when the operator acknowledges a singularity stop; cleared by the step on release. */
  singularityAcknowledged: boolean;
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
  lambda: number;
  jointCapScale: number;
  tcpLinearScale: number;
  tcpAngularScale: number;
  limitScale: number;
  /** The factor applied to qdot: the minimum of the four above, or 0 when the guard holds. */
  scale: number;
  binding: BindingLimit;
  /** The joint that bound the motion (joint-rate or joint-limit), else −1. */
  bindingJoint: number;
  guardState: GuardState;
  /** The caller's command in the world frame (twist, or J·rates in joint mode), before correction/scaling. */
  readonly commandedTwist: Float64Array;
  /** The twist given to the DLS solve (command plus drift correction). */
  readonly solvedTwist: Float64Array;
  /** J·qdot with the applied qdot: the twist the arm actually makes (to first order). */
  readonly achievedTwist: Float64Array;
  tcpLinearSpeed: number;
  tcpAngularSpeed: number;
  /** TCP pose at the start of the step (where J and σ were evaluated). */
  readonly pose: Float64Array;
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
  readonly pose: Float64Array;
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
  readonly tracker: SigmaTracker;
  readonly trialTracker: SigmaTracker;
}

/** Preallocates everything one arm's control steps need. Validates the arm. */
export function createControlWorkspace(arm: ArmModel): ControlWorkspace {
  const kernel = compileArm(arm);
  const n = kernel.n;
  const k = Math.min(6, n);
  return {
    n,
    kernel,
    J: new Float64Array(6 * n),
    G: new Float64Array(k * k),
    L: new Float64Array(k * k),
    y: new Float64Array(Math.max(6, n)),
    pose: new Float64Array(16),
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
    tracker: createSigmaTracker(k),
    trialTracker: createSigmaTracker(k),
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
    n, q, qdot: new Float64Array(n), referencePose,
    guardState: "off", singularityAcknowledged: false, time: 0, steps: 0,
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
  resetReferencePose(ws, state);
  resetSigmaTracker(ws.tracker);
}

export function createControlReport(): ControlStepReport {
  return {
    mode: "cartesian",
    sigmaMin: 0, sigmaSecond: 0, manipulability: 0, lambda: 0,
    jointCapScale: 1, tcpLinearScale: 1, tcpAngularScale: 1, limitScale: 1, scale: 1,
    binding: "none", bindingJoint: -1, guardState: "off",
    commandedTwist: new Float64Array(6), solvedTwist: new Float64Array(6), achievedTwist: new Float64Array(6),
    tcpLinearSpeed: 0, tcpAngularSpeed: 0, pose: new Float64Array(16),
    driftPositionError: 0, driftOrientationError: 0, driftReset: false,
    sigmaIterations: 0, sigmaFullDecomposition: false, fault: "none", isDegenerate: false,
  };
}

/** Sensible defaults (SI): singular-value schedule ε = 0.04, λmax = 0.04, 250 mm/s TCP cap, 5° margin. */
export function defaultControlParams(): ControlParams {
  return {
    damping: { kind: "singular-value", epsilon: 0.04, lambdaMax: 0.04 },
    dampSmallestOnly: false,
    jointRateCaps: null,
    tcpLinearCap: 0.25,
    tcpAngularCap: Math.PI / 2,
    jointLimitMargin: (5 * Math.PI) / 180,
    jointLimitSlowZone: (15 * Math.PI) / 180,
    guard: { policy: "damp-through", sigmaStop: 0.02, releaseFactor: 1.5 },
    driftCorrection: null,
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

/** Throws KinematicsInputError naming the field unless params suit an arm of n joints. Call at setup. */
export function validateControlParams(params: unknown, n: number): asserts params is ControlParams {
  if (params === null || typeof params !== "object") throw new KinematicsInputError("params", "must be an object");
  const p = params as ControlParams;
  validateDampingScheme(p.damping, "damping");
  if (typeof p.dampSmallestOnly !== "boolean") throw new KinematicsInputError("dampSmallestOnly", "must be a boolean");
  if (p.jointRateCaps !== null) requirePerJoint(p.jointRateCaps, n, "jointRateCaps", true);
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
  if (p.twistFrame !== "world" && p.twistFrame !== "tool") {
    throw new KinematicsInputError("twistFrame", `must be "world" or "tool"`);
  }
}

function beginReport(report: ControlStepReport, mode: "cartesian" | "joint"): void {
  report.mode = mode;
  report.sigmaMin = 0; report.sigmaSecond = 0; report.manipulability = 0; report.lambda = 0;
  report.jointCapScale = 1; report.tcpLinearScale = 1; report.tcpAngularScale = 1; report.limitScale = 1;
  report.scale = 1; report.binding = "none"; report.bindingJoint = -1;
  // Typed-array fields into locals once: V8 does not hoist the field loads out of a loop.
  const c = report.commandedTwist, v = report.solvedTwist, a = report.achievedTwist;
  c[0] = 0; c[1] = 0; c[2] = 0; c[3] = 0; c[4] = 0; c[5] = 0;
  v[0] = 0; v[1] = 0; v[2] = 0; v[3] = 0; v[4] = 0; v[5] = 0;
  a[0] = 0; a[1] = 0; a[2] = 0; a[3] = 0; a[4] = 0; a[5] = 0;
  report.tcpLinearSpeed = 0; report.tcpAngularSpeed = 0;
  report.driftPositionError = 0; report.driftOrientationError = 0; report.driftReset = false;
  report.sigmaIterations = 0; report.sigmaFullDecomposition = false;
  report.fault = "none"; report.isDegenerate = false;
}

function fail(state: ControlState, report: ControlStepReport, fault: ControlFault): ControlStepReport {
  state.qdot.fill(0);
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
 * Evaluates J, pose and the Gram matrix at state.q into the workspace and the pose into the report (σ
 * follows in estimateSigma). False when q (or J) is not finite.
 */
function measure(ws: ControlWorkspace, state: ControlState, report: ControlStepReport): boolean {
  const n = ws.n;
  const q = state.q;
  for (let i = 0; i < n; i++) if (!Number.isFinite(q[i]!)) return false;
  // J, pose and G in one pass (jacobian.ts; bit-identical to geometricJacobianInto + gramInto).
  const pose = ws.pose, G = ws.G;
  jacobianPoseGramInto(ws.kernel, q, ws.J, pose, G);
  const rp = report.pose;
  for (let i = 0; i < 16; i++) rp[i] = pose[i]!;
  // A non-finite entry of J makes a diagonal entry of the Gram matrix (a sum of squares) non-finite.
  const k = ws.tracker.k;
  for (let i = 0; i < k; i++) if (!(G[i * k + i]! < Infinity)) return false;
  return true;
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
 * Scales state.qdot by the one common factor of caps, TCP caps and joint limits (and the guard in
 * Cartesian mode), integrates, and fills the report. `guarded`: apply the singularity guard.
 */
function limitAndIntegrate(
  ws: ControlWorkspace, state: ControlState, params: ControlParams, dt: number, report: ControlStepReport,
  guarded: boolean,
): void {
  const n = ws.n;
  const k = ws.kernel;
  const qdot = state.qdot;
  const q = state.q;
  const J = ws.J;
  const maxSpeed = k.maxSpeed, qMin = k.min, qMax = k.max;
  // Params are read every step (they may change between steps). The joint-rate cap scale (limits.ts
  // capScaleInto) and the joint-limit slow-down (limits.ts jointLimitScaleInto) are written out here in
  // one loop over the joints: each keeps its own running factor and binding joint and visits the joints
  // in the same order with the same operations, so the results are bit-identical to the two calls.
  const userCaps = params.jointRateCaps;
  const margin = params.jointLimitMargin;
  const zone = params.jointLimitSlowZone;
  const marginAll = typeof margin === "number" ? margin : NaN;
  const zoneAll = typeof zone === "number" ? zone : NaN;
  const marginArr = typeof margin === "number" ? null : margin;
  const zoneArr = typeof zone === "number" ? null : zone;
  let sJoint = 1, jointBind = -1, jointDone = false;
  let sLimit = 1, limitBind = -1;
  let moving = false;
  for (let i = 0; i < n; i++) {
    const v = qdot[i]!;
    const ms = maxSpeed[i]!;
    let cap = ms;
    if (userCaps) {
      const c = userCaps[i]!;
      cap = c < ms ? c : ms;
    }
    const speed = Math.abs(v);
    // Joint-rate caps: s = min(1, min_i cap_i/|qdot_i|); NaN gives 0 and ends this scan.
    if (!jointDone) {
      if (Number.isNaN(speed)) {
        sJoint = 0;
        jointBind = i;
        jointDone = true;
      } else if (speed * sJoint > cap) {
        sJoint = cap / speed;
        jointBind = i;
      }
    }
    // Joint limits (limits.ts jointLimitScale).
    if (v === 0) continue;
    moving = true;
    const mg = marginArr ? marginArr[i]! : marginAll;
    const gap = v > 0 ? qMax[i]! - mg - q[i]! : q[i]! - (qMin[i]! + mg);
    if (gap === Infinity) continue;
    const x = speed * sLimit;
    let allowed: number;
    if (!(gap > 0)) allowed = 0;
    else {
      const zn = zoneArr ? zoneArr[i]! : zoneAll;
      // min(1, gap/zone) is 1 whenever gap ≥ zone (the quotient then rounds to ≥ 1), so the division
      // is only needed inside the zone; same value either way.
      const ramp = zn > 0 ? (gap >= zn ? 1 : Math.min(1, gap / zn)) : 1;
      const capRamp = cap === Infinity ? speed * ramp : cap * ramp;
      // allowed = min(capRamp, gap/dt), and the joint binds iff x > allowed. Skip the division when x ≤
      // gap/dt is certain: fl(x·dt) ≤ fl(gap·(1 − 2⁻⁴⁰)) gives x·dt ≤ gap exactly (rounding errors
      // ≤ 2⁻⁵² each; gap > 1e-290 keeps the product normal), hence x ≤ fl(gap/dt) (rounding is
      // monotonic) and the joint does not bind — the same outcome as with the division (derived).
      if (x <= capRamp && gap > 1e-290 && x * dt <= gap * 0.9999999999990905) continue;
      allowed = Math.min(capRamp, gap / dt);
    }
    if (x > allowed) {
      sLimit = allowed / speed;
      limitBind = i;
    }
  }
  // NaN in qdot (never from the solve, whose result is checked finite) is "moving" as before.
  // Achieved twist with the unscaled qdot; it scales linearly with s.
  // One pass over the columns with the six row sums in locals (same summation order as row by row).
  const a = report.achievedTwist;
  let a0 = 0, a1 = 0, a2 = 0, a3 = 0, a4 = 0, a5 = 0;
  const n2 = 2 * n, n3 = 3 * n, n4 = 4 * n, n5 = 5 * n;
  for (let c = 0; c < n; c++) {
    const v = qdot[c]!;
    a0 += J[c]! * v; a1 += J[n + c]! * v; a2 += J[n2 + c]! * v;
    a3 += J[n3 + c]! * v; a4 += J[n4 + c]! * v; a5 += J[n5 + c]! * v;
  }
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

  // Singularity guard (Cartesian motion only).
  const guard = params.guard;
  if (!guarded || guard.policy === "damp-through") {
    state.guardState = "off";
    state.singularityAcknowledged = false;
  } else {
    const sigma = report.sigmaMin;
    if (state.singularityAcknowledged && sigma >= guard.sigmaStop * guard.releaseFactor) {
      state.singularityAcknowledged = false; // the passage is over: the next approach stops again
    }
    if (state.singularityAcknowledged) {
      state.guardState = "acknowledged";
    } else if (!moving || s === 0) {
      if (state.guardState !== "stopped") state.guardState = sigma < guard.sigmaStop ? "backing-out" : "clear";
      if (state.guardState === "stopped" && sigma >= guard.sigmaStop * guard.releaseFactor) state.guardState = "clear";
    } else {
      // Evaluate σ_min where this step would end.
      const qTrial = ws.qTrial;
      for (let i = 0; i < n; i++) qTrial[i] = q[i]! + s * qdot[i]! * dt;
      jacobianPoseGramInto(k, qTrial, ws.Jtrial, ws.poseTrial, ws.Gtrial);
      copySigmaTracker(ws.tracker, ws.trialTracker);
      estimateSigmaMin(ws.trialTracker, ws.Gtrial);
      const sigmaNext = ws.trialTracker.sigmaMin;
      if (sigmaNext < guard.sigmaStop && sigmaNext < sigma) {
        s = 0;
        binding = "singularity-guard";
        bindingJoint = -1;
        state.guardState = "stopped";
      } else {
        state.guardState = sigma < guard.sigmaStop || sigmaNext < guard.sigmaStop ? "backing-out" : "clear";
      }
    }
  }
  report.guardState = state.guardState;

  report.scale = s;
  report.binding = binding;
  report.bindingJoint = bindingJoint;
  a[0] = a0 * s; a[1] = a1 * s; a[2] = a2 * s; a[3] = a3 * s; a[4] = a4 * s; a[5] = a5 * s;
  report.tcpLinearSpeed = lin * s;
  report.tcpAngularSpeed = ang * s;

  // Integrate (explicit Euler) with a final guard against stepping past a limit through rounding.
  const qPrev = ws.qPrev;
  for (let i = 0; i < n; i++) qPrev[i] = q[i]!;
  let finite = true;
  for (let i = 0; i < n; i++) {
    const v = qdot[i]! * s;
    qdot[i] = v;
    const q0 = q[i]!;
    let q1 = q0 + v * dt;
    const hi = qMax[i]!, lo = qMin[i]!;
    if (q1 > hi && q1 > q0) q1 = q0 > hi ? q0 : hi;
    if (q1 < lo && q1 < q0) q1 = q0 < lo ? q0 : lo;
    if (!Number.isFinite(q1) || !Number.isFinite(v)) finite = false;
    q[i] = q1;
  }
  if (!finite) {
    q.set(qPrev);
    fail(state, report, "non-finite-result");
    return;
  }
  state.time += dt;
  state.steps++;
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
  beginReport(report, "cartesian");
  if (!validDt(dt)) return fail(state, report, "invalid-dt");
  if (!commandIsFinite(twist, 6)) return fail(state, report, "invalid-command");
  if (!measure(ws, state, report)) return fail(state, report, "non-finite-result");
  const n = ws.n;
  const cmd = ws.cmd;
  const pose = ws.pose;
  if (params.twistFrame === "tool") toolTwistToWorldInto(pose, twist, cmd);
  else {
    cmd[0] = twist[0]!; cmd[1] = twist[1]!; cmd[2] = twist[2]!;
    cmd[3] = twist[3]!; cmd[4] = twist[4]!; cmd[5] = twist[5]!;
  }
  // Drift correction: v = v_cmd + K·e (CLIK).
  const v = ws.solve;
  const ct = report.commandedTwist;
  for (let i = 0; i < 6; i++) {
    const c = cmd[i]!;
    ct[i] = c;
    v[i] = c;
  }
  const drift = params.driftCorrection;
  const ref = state.referencePose;
  if (drift && drift.gain > 0) {
    const kdt = drift.gain * dt;
    if (!(kdt < 2)) {
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
    for (let i = 0; i < 6; i++) v[i] = v[i]! + drift.gain * e[i]!;
  } else {
    for (let i = 0; i < 16; i++) ref[i] = pose[i]!;
  }
  const sv = report.solvedTwist;
  for (let i = 0; i < 6; i++) sv[i] = v[i]!;

  // σ_min and w. When the step may end up undamped (λ = 0 possible: not numerical filtering, not a fixed
  // λ > 0) and J has 6 rows with n ≥ 6, the estimator also solves (G + δI) y = v with its factor, the
  // first half of the undamped DLS, while the factor is in registers.
  const scheme = params.damping;
  const speculate = n >= 6 && !params.dampSmallestOnly && !(scheme.kind === "fixed" && scheme.lambda !== 0);
  estimateSigma(ws, report, speculate ? v : null);

  // Damping λ (damping.ts, dampingForScheme; written out here so no number is boxed across a call).
  let lambda = 0;
  if (scheme.kind === "fixed") lambda = scheme.lambda;
  else if (scheme.kind === "singular-value") {
    const sg = report.sigmaMin;
    if (sg < scheme.epsilon) {
      const r = sg / scheme.epsilon;
      lambda = scheme.lambdaMax * Math.sqrt(1 - r * r);
    }
  } else if (scheme.kind === "manipulability") {
    const w = report.manipulability;
    if (w < scheme.w0) lambda = scheme.lambda0 * (1 - w / scheme.w0);
  }
  if (!(lambda >= 0 && lambda < Infinity)) return fail(state, report, "invalid-params");
  report.lambda = lambda;
  let ok: boolean;
  const tracker = ws.tracker;
  if (lambda === 0 && tracker.factorValid && !params.dampSmallestOnly) {
    // Undamped: reuse the estimator's factor of G + δI (δ ≈ 1e-14·trace G, a relative change of
    // δ/σ_min² in qdot — below 1e-6 whenever σ_min > 1e-4·σ_max). With `speculate` the estimator has
    // already solved for y (bit-identical to dlsSolveWithFactor's solve); only qdot = Jᵀ y is left.
    ok = speculate ? jtY6Into(ws.J, n, ws.y, state.qdot) : dlsSolveWithFactor(ws.J, 6, n, tracker.L, v, ws.y, state.qdot);
  } else {
    ws.lambdaBox[0] = lambda;
    ok = dlsFromGramBoxed(
      ws.J, 6, n, ws.G, v, ws.lambdaBox, params.dampSmallestOnly ? tracker.x1 : null, ws.L, ws.y, state.qdot,
    );
  }
  if (!ok) return fail(state, report, "singular-solve");

  limitAndIntegrate(ws, state, params, dt, report, true);
  if (report.isDegenerate) return report;
  // The reference follows the command as actually allowed (same factor), not the DLS residual, so drift
  // correction removes only the residual and the Euler drift.
  if (drift && drift.gain > 0) {
    const err = ws.err, sc = report.scale;
    for (let i = 0; i < 6; i++) err[i] = cmd[i]! * sc;
    advancePoseInPlace(ref, err, dt);
  }
  return report;
}

/**
 * One joint-jog step: the caller's joint rates (n numbers, rad/s or m/s) held for dt, under the same caps,
 * TCP speed check via J·qdot (METHODS.md §7 design note) and joint-limit slow-down. The singularity guard
 * does not apply (no coordinated motion). The drift reference follows the pose. Never throws.
 */
export function jointJogStep(
  ws: ControlWorkspace, state: ControlState, params: ControlParams, jointRates: ArrayLike<number>, dt: number,
  report: ControlStepReport,
): ControlStepReport {
  beginReport(report, "joint");
  if (!validDt(dt)) return fail(state, report, "invalid-dt");
  if (!commandIsFinite(jointRates, ws.n)) return fail(state, report, "invalid-command");
  if (!measure(ws, state, report)) return fail(state, report, "non-finite-result");
  estimateSigma(ws, report, null);
  const n = ws.n;
  const qdot = state.qdot, J = ws.J, ct = report.commandedTwist, sv = report.solvedTwist;
  for (let i = 0; i < n; i++) qdot[i] = jointRates[i]!;
  for (let r = 0; r < 6; r++) {
    let s = 0;
    for (let c = 0; c < n; c++) s += J[r * n + c]! * jointRates[c]!;
    ct[r] = s;
    sv[r] = s;
  }
  limitAndIntegrate(ws, state, params, dt, report, false);
  forwardPoseInto(ws.kernel, state.q, state.referencePose);
  return report;
}
