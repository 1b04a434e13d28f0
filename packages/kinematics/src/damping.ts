/**
 * Damping schedules for the DLS inverse (PRODUCT.md "The control step", step 4). λ is in the units of σ
 * (for the geometric Jacobian in m and rad: the units of the dominant direction).
 * - fixed λ.
 * - singular-value schedule: λ² = (1 − (σ_min/ε)²)·λ_max² when σ_min < ε, else 0
 *   (Chiaverini, Siciliano & Egeland 1994; Chiaverini 1997 — from memory, METHODS.md §2a).
 * - manipulability schedule: λ² = λ0²·(1 − w/w0)² when w < w0, else 0, i.e. k = λ² (Nakamura & Hanafusa
 *   1986 as commonly cited — from memory; PRODUCT.md and METHODS.md §2b "this reading").
 */

import { KinematicsInputError } from "./arm.ts";

export type DampingScheme =
  | { kind: "fixed"; lambda: number }
  | { kind: "singular-value"; epsilon: number; lambdaMax: number }
  | { kind: "manipulability"; w0: number; lambda0: number };

export interface SingularValueScheduleOptions {
  /** Width of the singular region ε (units of σ). */
  epsilon: number;
  /** Damping at the singularity λ_max (units of σ). */
  lambdaMax: number;
}

const schemeIo = new Float64Array(3);

/** λ for a scheme; no validation, never throws (hot path). NaN gives the scheme's maximum λ. */
export function dampingForScheme(scheme: DampingScheme, sigmaMin: number, manipulability: number): number {
  schemeIo[0] = sigmaMin;
  schemeIo[1] = manipulability;
  dampingForSchemeInto(scheme, schemeIo);
  return schemeIo[2]!;
}

/**
 * dampingForScheme with its numbers in a typed array — the one implementation of the schedules, which
 * the control step calls: reads σ_min from io[0] and w from io[1], writes λ into io[2]. No number crosses
 * a call or is boxed (the step stays allocation-free whether or not V8 inlines this). NaN σ (or w) gives the
 * scheme's maximum λ — the safe answer. Never throws.
 */
export function dampingForSchemeInto(scheme: DampingScheme, io: Float64Array): void {
  if (scheme.kind === "fixed") {
    io[2] = scheme.lambda;
    return;
  }
  // The two schedules alike: the measure x (σ_min, or w) against its threshold x0 (ε, or w0), from the
  // maximum λ at x = 0 down to none at x0; r = x/x0. Singular-value: λ = λ_max·sqrt(1 − r²); manipulability:
  // λ = λ0·(1 − r).
  let x: number, x0: number, max: number;
  const isSigma = scheme.kind === "singular-value";
  if (isSigma) {
    x = io[0]!; x0 = scheme.epsilon; max = scheme.lambdaMax;
  } else if (scheme.kind === "manipulability") {
    x = io[1]!; x0 = scheme.w0; max = scheme.lambda0;
  } else {
    io[2] = NaN; // not a scheme (validateDampingScheme refuses it); the step faults with "invalid-params"
    return;
  }
  if (Number.isNaN(x)) io[2] = max;
  else if (x >= x0) io[2] = 0;
  else {
    const r = x > 0 ? x / x0 : 0;
    io[2] = isSigma ? max * Math.sqrt(1 - r * r) : max * (1 - r);
  }
}

/** Throws KinematicsInputError unless the scheme's numbers are finite and in range. */
export function validateDampingScheme(scheme: unknown, field = "damping"): asserts scheme is DampingScheme {
  if (scheme === null || typeof scheme !== "object") throw new KinematicsInputError(field, "must be an object");
  const s = scheme as Record<string, unknown>;
  const need = (name: string, positive: boolean): void => {
    const v = s[name];
    if (typeof v !== "number" || !Number.isFinite(v) || v < 0 || (positive && v === 0)) {
      throw new KinematicsInputError(`${field}.${name}`, `must be a finite number ${positive ? "> 0" : "≥ 0"}, got ${String(v)}`);
    }
  };
  switch (s.kind) {
    case "fixed": need("lambda", false); break;
    case "singular-value": need("epsilon", true); need("lambdaMax", false); break;
    case "manipulability": need("w0", true); need("lambda0", false); break;
    default:
      throw new KinematicsInputError(`${field}.kind`, `must be "fixed", "singular-value" or "manipulability", got ${JSON.stringify(s.kind)}`);
  }
}

/**
 * λ of the singular-value schedule for σ_min, or — when `options` is a DampingScheme — of that scheme
 * (pass the manipulability w for the "manipulability" scheme). Validates its inputs.
 */
export function dampingFor(
  sigmaMin: number, options: SingularValueScheduleOptions | DampingScheme, manipulability?: number,
): number {
  const scheme: DampingScheme = "kind" in options ? options : { kind: "singular-value", ...options };
  validateDampingScheme(scheme, "options");
  if (typeof sigmaMin !== "number" || Number.isNaN(sigmaMin) || sigmaMin < 0) {
    throw new KinematicsInputError("sigmaMin", `must be a number ≥ 0, got ${String(sigmaMin)}`);
  }
  const w = manipulability ?? 0;
  if (scheme.kind === "manipulability" && (manipulability === undefined || Number.isNaN(w) || w < 0)) {
    throw new KinematicsInputError("manipulability", "the manipulability scheme needs w ≥ 0");
  }
  return dampingForScheme(scheme, sigmaMin, w);
}
