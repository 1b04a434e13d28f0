/**
 * Arm model, input validation and the compiled arm kernel.
 *
 * Units (SI, everywhere in this package): metres, radians, seconds; joint speeds in rad/s (revolute) or
 * m/s (prismatic). Matrices are row-major Float64Arrays. Conventions are those of PRODUCT.md
 * ("Conventions"): standard DH link Rz(theta) Tz(d) Tx(a) Rx(alpha) (Denavit & Hartenberg 1955);
 * modified DH link Rx(alpha) Tx(a) Rz(theta) Tz(d), where row i carries alpha_{i-1}, a_{i-1} (Craig 1986).
 * For a revolute joint the joint variable adds to theta, for a prismatic joint to d.
 */

export type DhConvention = "standard" | "modified";
export type JointType = "revolute" | "prismatic";

export interface ArmJoint {
  type: JointType;
  /** Link length [m]. */
  a: number;
  /** Link twist [rad]. */
  alpha: number;
  /** Link offset [m]; the joint variable adds to it for a prismatic joint. */
  d: number;
  /** Joint angle offset [rad]; the joint variable adds to it for a revolute joint. */
  theta: number;
  /** Lower joint limit [rad or m]. */
  min?: number;
  /** Upper joint limit [rad or m]. */
  max?: number;
  /** Maximum joint speed [rad/s or m/s]. */
  maxSpeed?: number;
  /**
   * Rated joint acceleration [rad/s² or m/s²]. When absent: DEFAULT_ACCEL_PER_SPEED_PER_S × maxSpeed, or
   * none (Infinity) when maxSpeed is absent too (ratedJointAccel).
   */
  maxAccel?: number;
}

export interface ArmModel {
  convention: DhConvention;
  joints: ArmJoint[];
  /** World-from-arm-base transform, 4x4 row-major (16 numbers). Identity when absent. */
  base?: ArrayLike<number>;
  /** Flange-to-TCP transform, 4x4 row-major (16 numbers). Identity when absent. */
  tool?: ArrayLike<number>;
}

/**
 * Default rated acceleration per unit of rated speed [1/s] for a joint that gives maxSpeed but no maxAccel:
 * 4 × maxSpeed, i.e. the joint reaches its rated speed from rest in 0.25 s (common practice, no source).
 */
export const DEFAULT_ACCEL_PER_SPEED_PER_S = 4;

/**
 * A joint's rated acceleration [rad/s² or m/s²]: maxAccel when given, else DEFAULT_ACCEL_PER_SPEED_PER_S ×
 * maxSpeed, else Infinity (no limit). No validation (validateArm checks maxAccel > 0).
 */
export function ratedJointAccel(joint: Pick<ArmJoint, "maxSpeed" | "maxAccel">): number {
  if (joint.maxAccel !== undefined) return joint.maxAccel;
  if (joint.maxSpeed !== undefined) return DEFAULT_ACCEL_PER_SPEED_PER_S * joint.maxSpeed;
  return Infinity;
}

/** Most joints an arm may have (matches the shared arm schema). */
export const MAX_JOINTS = 12;

/** The one error type of this package: a bad input at a public entry point. */
export class KinematicsInputError extends Error {
  /** Dotted path of the offending field, e.g. "joints[2].alpha" or "q[3]". */
  readonly field: string;
  constructor(field: string, message: string) {
    super(`${field}: ${message}`);
    this.name = "KinematicsInputError";
    this.field = field;
  }
}

function isArrayLike(x: unknown): x is ArrayLike<unknown> {
  return (
    x !== null &&
    typeof x === "object" &&
    typeof (x as { length?: unknown }).length === "number" &&
    Number.isInteger((x as { length: number }).length) &&
    (x as { length: number }).length >= 0
  );
}

/** Throws unless `x` is an array-like of exactly `length` finite numbers (length < 0: any length ≥ 1). */
export function requireFiniteVector(x: unknown, length: number, field: string): asserts x is ArrayLike<number> {
  if (!isArrayLike(x)) throw new KinematicsInputError(field, "must be an array of numbers");
  if (length >= 0 && x.length !== length) {
    throw new KinematicsInputError(field, `must have ${length} numbers, got ${x.length}`);
  }
  if (length < 0 && x.length < 1) throw new KinematicsInputError(field, "must not be empty");
  for (let i = 0; i < x.length; i++) {
    const v = x[i];
    if (typeof v !== "number" || !Number.isFinite(v)) {
      throw new KinematicsInputError(`${field}[${i}]`, `must be a finite number, got ${String(v)}`);
    }
  }
}

/** Throws unless `rows`, `cols` are positive integers and `J` holds rows·cols finite numbers. */
export function requireMatrix(J: unknown, rows: unknown, cols: unknown, field = "J"): asserts J is ArrayLike<number> {
  if (typeof rows !== "number" || !Number.isInteger(rows) || rows < 1) {
    throw new KinematicsInputError("rows", `must be a positive integer, got ${String(rows)}`);
  }
  if (typeof cols !== "number" || !Number.isInteger(cols) || cols < 1) {
    throw new KinematicsInputError("cols", `must be a positive integer, got ${String(cols)}`);
  }
  requireFiniteVector(J, rows * cols, field);
}

function requireFiniteField(v: unknown, field: string): void {
  if (typeof v !== "number" || !Number.isFinite(v)) {
    throw new KinematicsInputError(field, `must be a finite number, got ${String(v)}`);
  }
}

/** Throws unless T is a 4x4 row-major rigid transform (orthonormal rotation, last row 0 0 0 1). */
export function requireRigidTransform(T: unknown, field: string): asserts T is ArrayLike<number> {
  requireFiniteVector(T, 16, field);
  const t = T as ArrayLike<number>;
  if (Math.abs(t[12]!) > 1e-9 || Math.abs(t[13]!) > 1e-9 || Math.abs(t[14]!) > 1e-9 || Math.abs(t[15]! - 1) > 1e-9) {
    throw new KinematicsInputError(field, "last row of a homogeneous transform must be 0 0 0 1");
  }
  // R Rᵀ = I within 1e-6 (rotation part, rows 0..2, columns 0..2).
  for (let i = 0; i < 3; i++) {
    for (let j = 0; j < 3; j++) {
      const dot = t[4 * i]! * t[4 * j]! + t[4 * i + 1]! * t[4 * j + 1]! + t[4 * i + 2]! * t[4 * j + 2]!;
      if (Math.abs(dot - (i === j ? 1 : 0)) > 1e-6) {
        throw new KinematicsInputError(field, "rotation part is not orthonormal (R·Rᵀ ≠ I)");
      }
    }
  }
  const det =
    t[0]! * (t[5]! * t[10]! - t[6]! * t[9]!) -
    t[1]! * (t[4]! * t[10]! - t[6]! * t[8]!) +
    t[2]! * (t[4]! * t[9]! - t[5]! * t[8]!);
  if (det < 0) throw new KinematicsInputError(field, "rotation part is a reflection (det < 0)");
}

/**
 * Checks an arm against the JSON shape of PRODUCT.md and throws a KinematicsInputError naming the
 * offending joint and field. Used by every public entry point that takes an arm.
 */
export function validateArm(arm: unknown): asserts arm is ArmModel {
  if (arm === null || typeof arm !== "object") throw new KinematicsInputError("arm", "must be an object");
  const a = arm as Partial<ArmModel>;
  if (a.convention !== "standard" && a.convention !== "modified") {
    throw new KinematicsInputError("convention", `must be "standard" or "modified", got ${JSON.stringify(a.convention)}`);
  }
  if (!Array.isArray(a.joints)) throw new KinematicsInputError("joints", "must be an array");
  if (a.joints.length < 1) throw new KinematicsInputError("joints", "an arm needs at least one joint");
  if (a.joints.length > MAX_JOINTS) throw new KinematicsInputError("joints", `at most ${MAX_JOINTS} joints`);
  a.joints.forEach((j: unknown, i: number) => {
    const p = `joints[${i}]`;
    if (j === null || typeof j !== "object") throw new KinematicsInputError(p, "must be an object");
    const jt = j as Partial<ArmJoint>;
    if (jt.type !== "revolute" && jt.type !== "prismatic") {
      throw new KinematicsInputError(`${p}.type`, `must be "revolute" or "prismatic", got ${JSON.stringify(jt.type)}`);
    }
    requireFiniteField(jt.a, `${p}.a`);
    requireFiniteField(jt.alpha, `${p}.alpha`);
    requireFiniteField(jt.d, `${p}.d`);
    requireFiniteField(jt.theta, `${p}.theta`);
    if (jt.min !== undefined) requireFiniteField(jt.min, `${p}.min`);
    if (jt.max !== undefined) requireFiniteField(jt.max, `${p}.max`);
    if (jt.min !== undefined && jt.max !== undefined && !(jt.min < jt.max)) {
      throw new KinematicsInputError(`${p}.min`, `must be below max (${jt.min} ≥ ${jt.max})`);
    }
    if (jt.maxSpeed !== undefined) {
      requireFiniteField(jt.maxSpeed, `${p}.maxSpeed`);
      if (!(jt.maxSpeed > 0)) throw new KinematicsInputError(`${p}.maxSpeed`, "must be above zero");
    }
    if (jt.maxAccel !== undefined) {
      requireFiniteField(jt.maxAccel, `${p}.maxAccel`);
      if (!(jt.maxAccel > 0)) throw new KinematicsInputError(`${p}.maxAccel`, "must be above zero");
    }
  });
  if (a.base !== undefined) requireRigidTransform(a.base, "base");
  if (a.tool !== undefined) requireRigidTransform(a.tool, "tool");
}

/**
 * An arm validated once and laid out in typed arrays for the hot path, with its own scratch for the
 * n+1 link frames. Build it with compileArm(); the allocation-free functions take it instead of the JSON.
 */
export interface ArmKernel {
  readonly n: number;
  readonly modified: boolean;
  readonly a: Float64Array;
  readonly d: Float64Array;
  readonly theta: Float64Array;
  readonly cosAlpha: Float64Array;
  readonly sinAlpha: Float64Array;
  /** 1 for a prismatic joint, 0 for revolute. */
  readonly prismatic: Uint8Array;
  /** Joint limits, ±Infinity where the arm gives none. */
  readonly min: Float64Array;
  readonly max: Float64Array;
  /** Joint speed limits, Infinity where the arm gives none. */
  readonly maxSpeed: Float64Array;
  /** Rated joint accelerations (ratedJointAccel): maxAccel, else 4 × maxSpeed, else Infinity. */
  readonly maxAccel: Float64Array;
  readonly base: Float64Array | null;
  readonly tool: Float64Array | null;
  /** Scratch: frames 0..n (world from frame i), 16 numbers each; frame 0 is the base. */
  readonly frames: Float64Array;
}

/** Validates `arm` (throws KinematicsInputError) and compiles it for the allocation-free functions. */
export function compileArm(arm: ArmModel): ArmKernel {
  validateArm(arm);
  const n = arm.joints.length;
  const k: ArmKernel = {
    n,
    modified: arm.convention === "modified",
    a: new Float64Array(n),
    d: new Float64Array(n),
    theta: new Float64Array(n),
    cosAlpha: new Float64Array(n),
    sinAlpha: new Float64Array(n),
    prismatic: new Uint8Array(n),
    min: new Float64Array(n),
    max: new Float64Array(n),
    maxSpeed: new Float64Array(n),
    maxAccel: new Float64Array(n),
    base: arm.base ? Float64Array.from(arm.base) : null,
    tool: arm.tool ? Float64Array.from(arm.tool) : null,
    frames: new Float64Array(16 * (n + 1)),
  };
  arm.joints.forEach((j, i) => {
    k.a[i] = j.a;
    k.d[i] = j.d;
    k.theta[i] = j.theta;
    k.cosAlpha[i] = Math.cos(j.alpha);
    k.sinAlpha[i] = Math.sin(j.alpha);
    k.prismatic[i] = j.type === "prismatic" ? 1 : 0;
    k.min[i] = j.min ?? -Infinity;
    k.max[i] = j.max ?? Infinity;
    k.maxSpeed[i] = j.maxSpeed ?? Infinity;
    k.maxAccel[i] = ratedJointAccel(j);
  });
  return k;
}

/** Throws unless q is n finite joint values. */
export function requireJointVector(q: unknown, n: number, field = "q"): asserts q is ArrayLike<number> {
  requireFiniteVector(q, n, field);
}
