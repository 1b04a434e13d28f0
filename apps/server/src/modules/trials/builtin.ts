import {
  compileArm, dampedLeastSquares, forwardPoseInto, geometricJacobian, poseErrorInto, singularValues,
  svdInto, type ArmKernel, type ArmModel,
} from "@jogwright/kinematics";
import type { BuiltinTrialKind, TrialDefinition } from "@jogwright/shared";

/**
 * The built-in trials of an arm, generated from its geometry, never hand-placed (issue 10). Every one is an
 * ordinary trial definition (so it can be shown, copied and edited like a custom one). Numbers are derived
 * from the arm's kinematics at its ready pose:
 *
 * - wrist line: the wrist's middle joint (q5 of a six-axis arm, the second-last joint) is set to +12° at the
 *   ready pose, and the TCP moves in a straight line, orientation held, along the translation that lowers
 *   σ_min fastest (the gradient of σ_min through the pseudo-inverse), for twice the distance at which σ_min
 *   would reach zero to first order — so the line passes through wrist alignment and out again;
 * - near misses: the same line offset by 3 mm and 10 mm across it;
 * - lost rotation: a rotation at 0.3 rad/s about the direction the arm loses at wrist alignment (the left
 *   singular vector of σ_min there);
 * - elbow reach: straight out from the shoulder towards the workspace boundary, 30 mm past the farthest
 *   reach of the elbow joint (found by scanning it);
 * - shoulder pass: the wrist centre (where the last three axes meet) passes 20 mm beside joint 1's axis,
 *   horizontally, orientation held, and goes on 100 mm;
 * - guard ramp: the wrist line with the speed ramping from 0 to 0.25 m/s, into the stop-before guard.
 *
 * The 12° start, the 0.1 m/s speed, the offsets and the ramp are our choices (common practice, no source).
 */

const DEG = Math.PI / 180;
export const WRIST_START_ANGLE = 12 * DEG;
const SPEED = 0.1;
const DAMPING_FOR_IK = 1e-6;

export interface BuiltinTrial {
  kind: BuiltinTrialKind;
  definition: TrialDefinition;
}

export interface BuiltinTrials {
  trials: BuiltinTrial[];
  /** Kinds this arm has no trial of, with the reason. */
  notApplicable: { kind: BuiltinTrialKind; reason: string }[];
}

/** σ_min below this [m] counts as singular (rounding of an exactly singular Jacobian is ~1e-16). */
const SINGULAR = 1e-9;

export interface ArmForTrials {
  model: ArmModel;
  readyPose: readonly number[];
}

export function wristJointIndex(arm: ArmModel): number | null {
  return arm.joints.length >= 6 ? arm.joints.length - 2 : null;
}

export function builtinTrials(arm: ArmForTrials): BuiltinTrials {
  const model = arm.model;
  const n = model.joints.length;
  const wristKinds = ["wrist-line", "wrist-near-miss-3mm", "wrist-near-miss-10mm", "wrist-lost-rotation"] as const;
  if (n < 6) {
    const all: BuiltinTrialKind[] = [...wristKinds, "elbow-reach", "shoulder-pass", "guard-ramp"];
    return { trials: [], notApplicable: all.map((kind) => ({ kind, reason: "the built-in trials need an arm of six or more joints" })) };
  }
  const kernel = compileArm(model);
  const w = wristJointIndex(model)!;
  const start = Array.from(arm.readyPose);
  start[w] = clampToLimits(model, w, WRIST_START_ANGLE);
  const aligned = Array.from(start);
  aligned[w] = 0;
  const out: BuiltinTrial[] = [];
  const notApplicable: BuiltinTrials["notApplicable"] = [];
  const reach = elbowReach(kernel, model, arm.readyPose);

  // A redundant arm (or one without a spherical wrist) is not singular when its wrist's middle joint is
  // zero: it has no wrist-alignment trials, and its guard ramp runs along the elbow reach instead.
  if (sigmaMinAt(model, aligned) > SINGULAR) {
    const reason = `joint ${w + 1} at zero is not a singular configuration of this arm (σ_min ${sigmaMinAt(model, aligned).toFixed(3)} m at the ready pose), so there is no wrist alignment to pass`;
    for (const kind of wristKinds) notApplicable.push({ kind, reason });
    out.push(...reachTrials(model, arm.readyPose, reach, kernel));
    out.push(guardRamp(Array.from(arm.readyPose), reach.direction, reach.length, "the elbow reach"));
    return { trials: out, notApplicable };
  }

  const line = wristLine(model, start);
  const lineDuration = clamp(line.length / SPEED, 1, 12);
  const v = line.direction.map((x) => x * SPEED) as [number, number, number];
  out.push({
    kind: "wrist-line",
    definition: {
      name: "Straight line through wrist alignment",
      description: `The TCP moves ${mm(line.length)} mm in a straight line at ${SPEED} m/s, orientation held, through the pose where joint ${w + 1} is zero (the wrist axes align). Start: the ready pose with joint ${w + 1} at 12°.`,
      startPose: start,
      segments: [{ kind: "twist", frame: "world", linearMPerS: round3(v), angularRadPerS: [0, 0, 0], durationS: round(lineDuration) }],
    },
  });

  for (const [kind, offset] of [["wrist-near-miss-3mm", 0.003], ["wrist-near-miss-10mm", 0.01]] as const) {
    const across = perpendicular(line.direction);
    const shifted = solveNear(kernel, model, start, (T) => {
      T[3]! += across[0] * offset;
      T[7]! += across[1] * offset;
      T[11]! += across[2] * offset;
    });
    out.push({
      kind,
      definition: {
        name: `Near miss of wrist alignment, ${offset * 1000} mm`,
        description: `The wrist line shifted ${offset * 1000} mm across its direction: the arm passes close to wrist alignment without reaching it.`,
        startPose: shifted.q,
        segments: [{ kind: "twist", frame: "world", linearMPerS: round3(v), angularRadPerS: [0, 0, 0], durationS: round(lineDuration) }],
      },
    });
  }

  const lost = lostDirection(model, aligned);
  out.push({
    kind: "wrist-lost-rotation",
    definition: {
      name: "Rotation about the direction lost at wrist alignment",
      description: `The tool turns at 0.3 rad/s about the axis the arm cannot turn about when joint ${w + 1} is zero, starting 12° away from it.`,
      startPose: start,
      segments: [{ kind: "twist", frame: "world", linearMPerS: round3(lost.linear.map((x) => x * 0.3)), angularRadPerS: round3(lost.angular.map((x) => x * 0.3)), durationS: 1.5 }],
    },
  });

  out.push(...reachTrials(model, arm.readyPose, reach, kernel));
  out.push(guardRamp(start, line.direction, line.length, "the wrist line"));
  return { trials: out, notApplicable };
}

/** The elbow reach and the shoulder pass, from the ready pose. */
function reachTrials(
  _model: ArmModel, ready: readonly number[], reach: ReturnType<typeof elbowReach>, kernel: ArmKernel,
): BuiltinTrial[] {
  const pass = shoulderPass(kernel, ready);
  return [
    {
      kind: "elbow-reach",
      definition: {
        name: "Reach toward the workspace boundary",
        description: `From the ready pose the TCP moves straight away from the shoulder at ${SPEED} m/s, ${mm(reach.length)} mm, to 30 mm past where the arm is stretched out (found by solving the pose along the line).`,
        startPose: Array.from(ready),
        segments: [{ kind: "twist", frame: "world", linearMPerS: round3(reach.direction.map((x) => x * SPEED)), angularRadPerS: [0, 0, 0], durationS: round(clamp(reach.length / SPEED, 0.5, 20)) }],
      },
    },
    {
      kind: "shoulder-pass",
      definition: {
        name: "Pass near the shoulder singularity",
        description: `The wrist centre passes 20 mm beside joint 1's axis, horizontally at ${SPEED} m/s, orientation held (${mm(pass.length)} mm).`,
        startPose: Array.from(ready),
        segments: [{ kind: "twist", frame: "world", linearMPerS: round3(pass.direction.map((x) => x * SPEED)), angularRadPerS: [0, 0, 0], durationS: round(clamp(pass.length / SPEED, 0.5, 20)) }],
      },
    },
  ];
}

/** A line with the speed rising steadily from 0 to 0.25 m/s; 2·L/0.25 s covers its length L. */
function guardRamp(start: number[], direction: readonly number[], length: number, along: string): BuiltinTrial {
  const rampS = round(clamp((2 * length) / 0.25, 1, 12));
  return {
    kind: "guard-ramp",
    definition: {
      name: "Speed ramp into the stop-before guard",
      description: `Along ${along}, the speed rising steadily from 0 to 0.25 m/s: the stop-before guard must brake the arm in time however fast it comes.`,
      startPose: start,
      segments: [{
        kind: "expression",
        frame: "world",
        linear: direction.map((d) => `${num(d * 0.25)} m/s * t / ${num(rampS)} s`) as [string, string, string],
        angular: ["0", "0", "0"],
        durationS: rampS,
      }],
    },
  };
}

/** σ_min of the geometric Jacobian at q. */
export function sigmaMinAt(arm: ArmModel, q: readonly number[]): number {
  const n = arm.joints.length;
  const s = singularValues(geometricJacobian(arm, q), 6, n);
  return s[s.length - 1]!;
}

/** The translation (unit, world) that lowers σ_min fastest with the orientation held, and the line length. */
function wristLine(arm: ArmModel, q: number[]): { direction: [number, number, number]; length: number } {
  const n = arm.joints.length;
  const h = 1e-6;
  const grad = new Array<number>(n);
  for (let i = 0; i < n; i++) {
    const a = [...q], b = [...q];
    a[i]! += h;
    b[i]! -= h;
    grad[i] = (sigmaMinAt(arm, a) - sigmaMinAt(arm, b)) / (2 * h);
  }
  const J = geometricJacobian(arm, q);
  // dσ/dx_k = ∇_q σ · J⁺ e_k (k = x, y, z; the angular rows held at zero).
  const dx = [0, 1, 2].map((k) => {
    const e = [0, 0, 0, 0, 0, 0];
    e[k] = 1;
    const dq = dampedLeastSquares(J, 6, n, e, DAMPING_FOR_IK);
    return grad.reduce((s, g, i) => s + g * dq[i]!, 0);
  });
  const norm = Math.hypot(dx[0]!, dx[1]!, dx[2]!);
  const direction = dx.map((x) => -x / norm) as [number, number, number];
  const sigma = sigmaMinAt(arm, q);
  return { direction, length: 2 * (sigma / norm) };
}

/**
 * The twist the arm loses at q: the left singular vector of σ_min (J·q̇ has no component along it), scaled
 * so that its angular part is a unit vector — a rotation about the lost axis, with the linear part the TCP
 * makes when it turns about that axis where it passes (through the wrist centre).
 */
function lostDirection(arm: ArmModel, q: number[]): { linear: [number, number, number]; angular: [number, number, number] } {
  const n = arm.joints.length;
  const J = geometricJacobian(arm, q);
  const k = Math.min(6, n);
  const sigma = new Float64Array(k), U = new Float64Array(6 * k), V = new Float64Array(n * k);
  svdInto(J, 6, n, sigma, U, V);
  const col = k - 1;
  const u = [0, 1, 2, 3, 4, 5].map((r) => U[r * k + col]!);
  const norm = Math.hypot(u[3]!, u[4]!, u[5]!) || 1;
  return { linear: [u[0]! / norm, u[1]! / norm, u[2]! / norm], angular: [u[3]! / norm, u[4]! / norm, u[5]! / norm] };
}

/**
 * Straight out from the shoulder (origin of frame 1) through the TCP, orientation held, 30 mm past the
 * boundary: the boundary is found by continuation — the pose is solved every 5 mm along the line (warm
 * started) until the solve fails or σ_min falls below 1e-3 m (the arm is stretched out).
 */
function elbowReach(kernel: ArmKernel, arm: ArmModel, ready: readonly number[]): { direction: [number, number, number]; length: number } {
  const pose = new Float64Array(16);
  forwardPoseInto(kernel, ready, pose);
  const shoulder = [kernel.frames[16 + 3]!, kernel.frames[16 + 7]!, kernel.frames[16 + 11]!];
  const r = [pose[3]! - shoulder[0]!, pose[7]! - shoulder[1]!, pose[11]! - shoulder[2]!];
  const norm = Math.hypot(r[0]!, r[1]!, r[2]!);
  const direction = r.map((x) => x / norm) as [number, number, number];
  const STEP = 0.005;
  let q = Array.from(ready);
  let reached = 0;
  for (let s = STEP; s <= 2; s += STEP) {
    const solved = solveNear(kernel, arm, q, (T) => {
      T[3]! += direction[0] * STEP;
      T[7]! += direction[1] * STEP;
      T[11]! += direction[2] * STEP;
    });
    if (!solved.converged || sigmaMinAt(arm, solved.q) < 1e-3) break;
    q = solved.q;
    reached = s;
  }
  return { direction, length: reached + 0.03 };
}

/** The wrist centre at q: the point where the axes of joints n−2 and n meet (closest points, averaged). */
export function wristCentre(kernel: ArmKernel, q: readonly number[]): [number, number, number] {
  const pose = new Float64Array(16);
  forwardPoseInto(kernel, q, pose);
  const n = kernel.n;
  // The axis of joint i (1-based): standard DH through frame i−1 along its z; modified DH through frame i.
  const axis = (i: number) => {
    const f = (kernel.modified ? i : i - 1) * 16;
    const F = kernel.frames;
    return { p: [F[f + 3]!, F[f + 7]!, F[f + 11]!], z: [F[f + 2]!, F[f + 6]!, F[f + 10]!] };
  };
  const a = axis(n - 2), b = axis(n);
  const w0 = a.p.map((v, i) => v - b.p[i]!);
  const A = dot(a.z, a.z), B = dot(a.z, b.z), C = dot(b.z, b.z), D = dot(a.z, w0), E = dot(b.z, w0);
  const den = A * C - B * B;
  const s = den > 1e-12 ? (B * E - C * D) / den : 0;
  const t = den > 1e-12 ? (A * E - B * D) / den : E / C;
  const pa = a.p.map((v, i) => v + s * a.z[i]!), pb = b.p.map((v, i) => v + t * b.z[i]!);
  return [0, 1, 2].map((i) => (pa[i]! + pb[i]!) / 2) as [number, number, number];
}

/** Horizontal line of the wrist centre passing 20 mm beside joint 1's axis. */
function shoulderPass(kernel: ArmKernel, ready: readonly number[]): { direction: [number, number, number]; length: number } {
  const c = wristCentre(kernel, ready);
  // Joint 1's axis: through the origin of frame 0 (standard) or 1 (modified) along its z (vertical for the
  // demo arms; projected onto the horizontal plane in general).
  const f = kernel.modified ? 16 : 0;
  const F = kernel.frames;
  const ax = [F[f + 3]!, F[f + 7]!];
  const r = [c[0] - ax[0]!, c[1] - ax[1]!];
  const R = Math.hypot(r[0]!, r[1]!);
  const miss = Math.min(0.02, R / 2);
  const toward = [-r[0]! / R, -r[1]! / R];
  const angle = Math.asin(miss / R);
  const cs = Math.cos(angle), sn = Math.sin(angle);
  const d: [number, number, number] = [toward[0]! * cs - toward[1]! * sn, toward[0]! * sn + toward[1]! * cs, 0];
  // From the start to 100 mm past the point of closest approach.
  return { direction: d, length: Math.sqrt(R * R - miss * miss) + 0.1 };
}

/** Joint positions near q whose TCP pose is q's pose changed by `move` (Newton with a tiny damping). */
function solveNear(
  kernel: ArmKernel, arm: ArmModel, q0: readonly number[], move: (T: Float64Array) => void,
): { q: number[]; converged: boolean } {
  const n = kernel.n;
  const target = new Float64Array(16);
  forwardPoseInto(kernel, q0, target);
  move(target);
  const q = Array.from(q0);
  const pose = new Float64Array(16), e = new Float64Array(6);
  for (let it = 0; it < 50; it++) {
    forwardPoseInto(kernel, q, pose);
    poseErrorInto(pose, target, e);
    if (Math.hypot(...e) < 1e-12) return { q, converged: withinLimits(arm, q) };
    const dq = dampedLeastSquares(geometricJacobian(arm, q), 6, n, e, DAMPING_FOR_IK);
    for (let i = 0; i < n; i++) q[i]! += dq[i]!;
  }
  return { q, converged: false };
}

function withinLimits(arm: ArmModel, q: readonly number[]): boolean {
  return arm.joints.every((j, i) => q[i]! >= (j.min ?? -Infinity) && q[i]! <= (j.max ?? Infinity));
}

function perpendicular(d: readonly number[]): [number, number, number] {
  // d × world z, or d × world x when d is vertical.
  let c = [d[1]!, -d[0]!, 0];
  if (Math.hypot(c[0]!, c[1]!) < 1e-6) c = [0, d[2]!, -d[1]!];
  const norm = Math.hypot(c[0]!, c[1]!, c[2]!);
  return c.map((x) => x / norm) as [number, number, number];
}

function clampToLimits(arm: ArmModel, i: number, v: number): number {
  const j = arm.joints[i]!;
  return Math.min(j.max ?? Infinity, Math.max(j.min ?? -Infinity, v));
}
function clamp(v: number, lo: number, hi: number): number {
  return Math.min(hi, Math.max(lo, v));
}
function dot(a: readonly number[], b: readonly number[]): number {
  return a[0]! * b[0]! + a[1]! * b[1]! + a[2]! * b[2]!;
}
function round(v: number): number {
  return Math.round(v * 1000) / 1000;
}
function round3(v: readonly number[]): [number, number, number] {
  return [Number(v[0]!.toPrecision(12)), Number(v[1]!.toPrecision(12)), Number(v[2]!.toPrecision(12))];
}
function num(v: number): string {
  return String(Number(v.toPrecision(12)));
}
function mm(m: number): string {
  return (m * 1000).toFixed(0);
}
