/**
 * Input shaping of the control step (PRODUCT.md "The control step", step 1): per-axis deadband with
 * rescaling and expo, and slew (acceleration) limits on a commanded vector. One copy for the server's motion
 * gate (motion-gate.ts) and the console's device calibration. Pure functions and in-place slew limiters on
 * caller-owned Float64Arrays: no allocation, no throw, called every tick. Values are unitless stick
 * deflections (−1 … 1) or, for the slew limiters, whatever unit the caller's vector has (SI).
 */

/**
 * Deadband with rescaling: out = (|x| − d)/(1 − d)·sign(x) for |x| > d, else 0, so full deflection still
 * gives 1 (common practice, no source; METHODS.md §8 check values: d = 0.1: 0.55 → 0.5, 1 → 1). NaN → 0.
 */
export function applyDeadband(x: number, d: number): number {
  const ax = x < 0 ? -x : x;
  if (!(ax > d) || !(d < 1)) return 0;
  const out = (ax - d) / (1 - d);
  return x < 0 ? -out : out;
}

/** Expo curve: out = (1 − e)·x + e·x³ (common practice, no source). Keeps ±1 at ±1, 0 at 0 and the sign. */
export function applyExpo(x: number, e: number): number {
  return (1 - e) * x + e * x * x * x;
}

/** Deadband, then expo, clamped to −1 … 1 (a value outside, or NaN, cannot widen the command). */
export function shapeAxis(x: number, deadband: number, expo: number): number {
  const y = applyExpo(applyDeadband(x, deadband), expo);
  return y > 1 ? 1 : y < -1 ? -1 : y === y ? y : 0;
}

/**
 * The inverse of shapeAxis: the stick deflection that shapeAxis maps onto y (−1 … 1, clamped). Scripted
 * trials command a twist through the same motion gate as a live operator, so they turn each wanted
 * fraction of the cap into the deflection a stick would need (derived). The expo cubic
 * f(u) = (1 − e)·u + e·u³ is increasing on 0 … 1: Newton's method from u = |y| (exact for e = 0), with a
 * bisection of [0, 1] when Newton does not settle (e near 1 and y near 0, where f′ → 0); then the deadband
 * is undone: x = d + u·(1 − d). y = 0 → 0. shapeAxis(unshapeAxis(y)) = y to ~1e-15 (shaping.test.ts).
 */
export function unshapeAxis(y: number, deadband: number, expo: number): number {
  if (!(y === y) || y === 0) return 0;
  const target = y < 0 ? (y < -1 ? 1 : -y) : y > 1 ? 1 : y;
  let u = target;
  let settled = false;
  for (let i = 0; i < 40; i++) {
    const f = applyExpo(u, expo) - target;
    const slope = 1 - expo + 3 * expo * u * u;
    if (!(slope > 1e-12)) break;
    let next = u - f / slope;
    next = next < 0 ? 0 : next > 1 ? 1 : next;
    if (Math.abs(next - u) <= 1e-16) {
      u = next;
      settled = true;
      break;
    }
    u = next;
  }
  if (!settled || Math.abs(applyExpo(u, expo) - target) > 1e-15) {
    let lo = 0, hi = 1;
    for (let i = 0; i < 64; i++) {
      const mid = 0.5 * (lo + hi);
      if (mid === lo || mid === hi) break;
      if (applyExpo(mid, expo) < target) lo = mid;
      else hi = mid;
    }
    u = Math.abs(applyExpo(lo, expo) - target) <= Math.abs(applyExpo(hi, expo) - target) ? lo : hi;
  }
  const x = deadband + u * (1 - deadband);
  return y < 0 ? -x : x;
}

const stepBox = new Float64Array(1);

/**
 * Moves the 3-vector cur[offset..offset+2] toward target[offset..] by at most maxStep (Euclidean), so the
 * direction of the change is kept (a slew-rate / acceleration limit on a vector; derived).
 */
export function slewVector3(cur: Float64Array, target: ArrayLike<number>, offset: number, maxStep: number): void {
  stepBox[0] = maxStep;
  slewVector3Into(cur, target, offset, stepBox, 0);
}

/**
 * slewVector3 with the step read from steps[stepIndex]: a computed double passed to a call V8 does not
 * inline is boxed on the heap, a typed-array slot is not (keeps the motion gate's tick allocation-free).
 */
export function slewVector3Into(
  cur: Float64Array, target: ArrayLike<number>, offset: number, steps: Float64Array, stepIndex: number,
): void {
  const maxStep = steps[stepIndex]!;
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

/**
 * Moves cur[0..n−1] toward target by ONE factor for the whole vector, f = min(1, min_i maxSteps[i]/|Δ_i|),
 * so no element changes by more than its own step and the direction of the change is kept (the per-joint
 * acceleration limit of PRODUCT.md step 6 applied to a joint-rate command; derived). maxSteps[i] may be
 * Infinity (no limit). Returns f.
 */
export function slewUniform(cur: Float64Array, target: ArrayLike<number>, n: number, maxSteps: ArrayLike<number>): number {
  let f = 1;
  for (let i = 0; i < n; i++) {
    const d = target[i]! - cur[i]!;
    const ad = d < 0 ? -d : d;
    const m = maxSteps[i]!;
    if (ad * f > m) f = m / ad;
  }
  if (f >= 1) {
    for (let i = 0; i < n; i++) cur[i] = target[i]!;
    return 1;
  }
  for (let i = 0; i < n; i++) cur[i] = cur[i]! + (target[i]! - cur[i]!) * f;
  return f;
}
