/**
 * Input shaping of the control step (PRODUCT.md "The control step", step 1), on the server, per axis.
 * Pure scalar functions and one in-place slew limiter: no allocation, called every tick.
 */

/**
 * Deadband with rescaling: out = (|x| − d)/(1 − d)·sign(x) for |x| > d, else 0, so full deflection still
 * gives 1 (common practice, no source; METHODS.md §8 check values: d = 0.1: 0.55 → 0.5, 1 → 1).
 */
export function applyDeadband(x: number, d: number): number {
  const ax = x < 0 ? -x : x;
  if (ax <= d || d >= 1) return 0;
  const out = (ax - d) / (1 - d);
  return x < 0 ? -out : out;
}

/** Expo curve: out = (1 − e)·x + e·x³ (common practice, no source). Keeps ±1 at ±1 and the sign. */
export function applyExpo(x: number, e: number): number {
  return (1 - e) * x + e * x * x * x;
}

/** Deadband, then expo, clamped to −1…1 (inputs are validated to lie there already). */
export function shapeAxis(x: number, deadband: number, expo: number): number {
  const y = applyExpo(applyDeadband(x, deadband), expo);
  return y > 1 ? 1 : y < -1 ? -1 : y;
}

/**
 * Moves the 3-vector cur[offset..offset+2] toward target[offset..] by at most maxStep (Euclidean), so the
 * direction of the change is kept (a slew-rate / acceleration limit on a vector; derived).
 */
export function slewVector3(cur: Float64Array, target: Float64Array, offset: number, maxStep: number): void {
  const dx = target[offset]! - cur[offset]!;
  const dy = target[offset + 1]! - cur[offset + 1]!;
  const dz = target[offset + 2]! - cur[offset + 2]!;
  const len = Math.sqrt(dx * dx + dy * dy + dz * dz);
  if (len <= maxStep) {
    cur[offset] = target[offset]!;
    cur[offset + 1] = target[offset + 1]!;
    cur[offset + 2] = target[offset + 2]!;
    return;
  }
  const k = maxStep / len;
  cur[offset] = cur[offset]! + dx * k;
  cur[offset + 1] = cur[offset + 1]! + dy * k;
  cur[offset + 2] = cur[offset + 2]! + dz * k;
}

/** Moves each cur[i] toward target[i] by at most maxStep (per-axis slew limit), i < n. */
export function slewEach(cur: Float64Array, target: Float64Array, n: number, maxStep: number): void {
  for (let i = 0; i < n; i++) {
    const d = target[i]! - cur[i]!;
    cur[i] = d > maxStep ? cur[i]! + maxStep : d < -maxStep ? cur[i]! - maxStep : target[i]!;
  }
}
