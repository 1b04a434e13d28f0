/**
 * Rate caps and joint-limit slow-down (PRODUCT.md "The control step", step 6). Units: rad/s or m/s for
 * joint rates, rad or m for joint positions, seconds for dt.
 *
 * One factor for all joints: s = min(1, min_i cap_i/|qdot_i|). Because J is linear, J(s·qdot) = s·J·qdot,
 * so the tool keeps its direction; clipping joints one by one does not (derived; METHODS.md §6).
 */

import { KinematicsInputError, requireFiniteVector } from "./arm.ts";

/**
 * The largest s ∈ [0, 1] with s·|values_i| ≤ caps_i for every i (caps may be Infinity). Writes the index
 * of the binding entry (or −1 when s = 1) into bindingOut[0] when given. Allocation-free; NaN in
 * `values` gives s = 0.
 */
export function capScale(
  values: ArrayLike<number>, caps: ArrayLike<number>, n: number, bindingOut: Int32Array | null = null,
): number {
  capScaleInto(values, caps, n, scaleBox, bindingOut);
  return scaleBox[0]!;
}

const scaleBox = new Float64Array(1);

/** capScale writing s into result[0] (no boxed return value on the hot path). */
export function capScaleInto(
  values: ArrayLike<number>, caps: ArrayLike<number>, n: number, result: Float64Array, bindingOut: Int32Array | null,
): void {
  let s = 1;
  let bind = -1;
  for (let i = 0; i < n; i++) {
    const v = Math.abs(values[i]!);
    const c = caps[i]!;
    if (Number.isNaN(v)) {
      s = 0;
      bind = i;
      break;
    }
    if (v * s > c) {
      s = c / v;
      bind = i;
    }
  }
  if (bindingOut) bindingOut[0] = bind;
  result[0] = s;
}

/** out = s·qdot with s of capScale; returns s. `out` may be `qdot`. Allocation-free. */
export function scaleToCapsInto(qdot: ArrayLike<number>, caps: ArrayLike<number>, out: Float64Array): number {
  const n = qdot.length;
  const s = capScale(qdot, caps, n);
  for (let i = 0; i < n; i++) out[i] = s * qdot[i]!;
  return s;
}

/** `{ qdot: s·qdot, scale: s }` with s = min(1, min_i cap_i/|qdot_i|). Validates its inputs. */
export function scaleToCaps(qdot: ArrayLike<number>, caps: ArrayLike<number>): { qdot: Float64Array; scale: number } {
  requireFiniteVector(qdot, -1, "qdot");
  if (!caps || (caps as ArrayLike<number>).length !== qdot.length) {
    throw new KinematicsInputError("caps", `must have ${qdot.length} numbers (one per joint)`);
  }
  for (let i = 0; i < caps.length; i++) {
    const c = caps[i];
    if (typeof c !== "number" || Number.isNaN(c) || c < 0) {
      throw new KinematicsInputError(`caps[${i}]`, `must be a number ≥ 0 (Infinity for none), got ${String(c)}`);
    }
  }
  const out = new Float64Array(qdot.length);
  const scale = scaleToCapsInto(qdot, caps, out);
  return { qdot: out, scale };
}

/**
 * The highest speed [rad/s or m/s] toward a stand-off point `gap` away [rad or m] from which the joint can
 * still stop before it, braking at `accel` [rad/s² or m/s²] in steps of dt with explicit Euler (each step
 * moves by the new speed·dt). Braking as hard as allowed gives the speeds v, v − h, v − 2h, … (h = accel·dt),
 * covering S(v)·dt with S(v) = (m + 1)·v − h·m(m + 1)/2, m = floor(v/h); this returns the largest v with
 * S(v)·dt ≤ gap (derived). It is self-consistent: from v ≤ brakingSpeed(g), the next step's bound
 * brakingSpeed(g − v·dt) ≥ v − h, so the joint never needs more than `accel` to stay on it (derived:
 * S(v − h) = S(v) − v). accel = Infinity (or not > 0) gives gap/dt (stop within one step); gap ≤ 0 gives 0.
 * Continuous-time counterpart: v ≈ sqrt(2·accel·gap) (v²/2a, common practice).
 */
export function brakingSpeed(gap: number, accel: number, dt: number): number {
  brakeIo[0] = gap;
  brakeIo[1] = accel;
  brakeIo[2] = dt;
  brakingSpeedInto(brakeIo);
  return brakeIo[3]!;
}

const brakeIo = new Float64Array(4);

/**
 * brakingSpeed with its numbers in a typed array (gap, accel, dt in io[0..2], the speed out in io[3]): the
 * one implementation, called on the hot path, where a number passed to or returned from a call that V8
 * does not inline would be boxed (an allocation).
 */
function brakingSpeedInto(io: Float64Array): void {
  const gap = io[0]!, accel = io[1]!, dt = io[2]!;
  if (!(gap > 0)) { io[3] = 0; return; }
  if (gap === Infinity) { io[3] = Infinity; return; }
  if (accel === Infinity || !(accel > 0)) { io[3] = gap / dt; return; } // no (valid) acceleration limit
  const h = accel * dt;
  const G = gap / dt;
  // Largest integer m with h·m(m + 1)/2 ≤ G, from the quadratic formula, then corrected for rounding
  // (off by at most one; bounded loops, and none where m is too large for m + 1 to be exact).
  let m = Math.floor((Math.sqrt(1 + (8 * G) / h) - 1) / 2);
  if (!(m >= 0)) m = 0;
  if (m < 4e15) {
    for (let k = 0; k < 4 && (h * (m + 1) * (m + 2)) / 2 <= G; k++) m++;
    for (let k = 0; k < 4 && m > 0 && (h * m * (m + 1)) / 2 > G; k++) m--;
  }
  const v = m * h + (G - (h * m * (m + 1)) / 2) / (m + 1);
  // 1e-12 relative margin so rounding can never put the Euler step past the stand-off (derived).
  const w = v * (1 - 1e-12);
  io[3] = w < G ? w : G;
}

/**
 * Joint-limit slow-down as one factor for all joints. For a joint moving toward a limit, let
 * g = distance to (limit − margin_i), the stand-off point. The speed toward the limit may be at most
 *   min(cap_i · clamp(g/zone_i, 0, 1), brakingSpeed(g, accel_i, dt))        (0 when g ≤ 0)
 * so joints slow linearly through the zone (common practice, no source) and the joint can always stop
 * before limit − margin within its acceleration limit; with no acceleration limit (accels null or
 * Infinity) the second term is g/dt, so one Euler step q + dt·qdot can never pass limit − margin (derived).
 * With no cap (Infinity) the zone scales the joint's own speed by clamp(g/zone, 0, 1). Joints moving away
 * from a limit are never slowed. Returns s ∈ [0, 1]; bindingOut[0] = the binding joint or −1.
 * Allocation-free.
 */
export function jointLimitScale(
  q: ArrayLike<number>, qdot: ArrayLike<number>, min: ArrayLike<number>, max: ArrayLike<number>,
  caps: ArrayLike<number>, n: number, margins: ArrayLike<number>, zones: ArrayLike<number>, dt: number,
  bindingOut: Int32Array | null = null, accels: ArrayLike<number> | null = null,
): number {
  scaleBox[0] = dt;
  jointLimitScaleInto(q, qdot, min, max, caps, n, margins, zones, scaleBox, bindingOut, accels);
  return scaleBox[0]!;
}

/**
 * jointLimitScale with dt passed in and s returned through box[0] (allocation-free in V8). The control
 * step calls this. Two shortcuts that do not change any result: gap/zone is only divided out inside the
 * zone (min(1, gap/zone) is 1 whenever gap ≥ zone), and the bound is only evaluated when the joint may
 * bind: without an acceleration limit, x·dt ≤ gap·(1 − 2⁻⁴⁰) in floating point proves x ≤ fl(gap/dt)
 * (rounding errors ≤ 2⁻⁵² each, gap > 1e-290 keeps the product normal; rounding is monotonic); with one,
 * S(x)·dt ≤ x²/(2a) + x·dt/2 + a·dt²/8 (derived, S of brakingSpeed), so that sum ≤ gap·(1 − 1e-9) proves
 * x ≤ brakingSpeed(gap).
 */
export function jointLimitScaleInto(
  q: ArrayLike<number>, qdot: ArrayLike<number>, min: ArrayLike<number>, max: ArrayLike<number>,
  caps: ArrayLike<number>, n: number, margins: ArrayLike<number>, zones: ArrayLike<number>, box: Float64Array,
  bindingOut: Int32Array | null, accels: ArrayLike<number> | null = null,
): void {
  const dt = box[0]!;
  let s = 1;
  let bind = -1;
  for (let i = 0; i < n; i++) {
    const v = qdot[i]!;
    if (v === 0) continue;
    const margin = margins[i]!;
    const gap = v > 0 ? max[i]! - margin - q[i]! : q[i]! - (min[i]! + margin);
    if (gap === Infinity) continue;
    const speed = Math.abs(v);
    const x = speed * s;
    let allowed: number;
    if (!(gap > 0)) allowed = 0;
    else {
      const zone = zones[i]!;
      const ramp = zone > 0 ? (gap >= zone ? 1 : Math.min(1, gap / zone)) : 1;
      const cap = caps[i]!;
      const capRamp = cap === Infinity ? speed * ramp : cap * ramp;
      const a = accels === null ? Infinity : accels[i]!;
      if (a === Infinity || !(a > 0)) {
        if (x <= capRamp && gap > 1e-290 && x * dt <= gap * 0.9999999999990905) continue;
        allowed = Math.min(capRamp, gap / dt);
      } else {
        if (x <= capRamp && (x * x) / (2 * a) + (x * dt) / 2 + (a * dt * dt) / 8 <= gap * (1 - 1e-9)) continue;
        const io = brakeIo;
        io[0] = gap; io[1] = a; io[2] = dt;
        brakingSpeedInto(io);
        allowed = Math.min(capRamp, io[3]!);
      }
    }
    if (x > allowed) {
      s = allowed / speed;
      bind = i;
    }
  }
  if (bindingOut) bindingOut[0] = bind;
  box[0] = s;
}

/**
 * Acceleration limit as one factor on the change of the joint rates (PRODUCT.md step 6):
 *   Δ = target − prev,   f = min(1, min_i accel_i·dt/|Δ_i|)
 * so prev + f·Δ changes every joint by at most accel_i·dt and keeps the direction of the change (derived).
 * box[0] = dt in, f out; bindingOut[0] = the joint that set f, or −1 when f = 1. A NaN change gives f = 0.
 * accel_i = Infinity: no limit for that joint. Allocation-free.
 */
export function accelScaleInto(
  prev: ArrayLike<number>, target: ArrayLike<number>, accels: ArrayLike<number>, n: number, box: Float64Array,
  bindingOut: Int32Array | null,
): void {
  const dt = box[0]!;
  let f = 1;
  let bind = -1;
  for (let i = 0; i < n; i++) {
    const d = Math.abs(target[i]! - prev[i]!);
    if (Number.isNaN(d)) {
      f = 0;
      bind = i;
      break;
    }
    const step = accels[i]! * dt;
    if (d * f > step) {
      f = step / d;
      bind = i;
    }
  }
  if (bindingOut) bindingOut[0] = bind;
  box[0] = f;
}

/**
 * With acceleration limits the joint rates prev + f·(target − prev) may still head for a joint limit
 * faster than the joint can brake (prev set under other parameters, or f held down by another joint).
 * Returns (box[0]: dt in, result out) the smallest f ∈ [0, 1] for which every joint moving toward a limit
 * stays at or below brakingSpeed(gap) toward it; target must itself satisfy that bound (the control step's
 * target does: jointLimitScaleInto, or zero). The caller uses max(its f, this f): the joint limit wins
 * over the acceleration limit, so a limit is never passed (derived). bindingOut[0] = the joint, or −1.
 */
export function brakingFloorInto(
  q: ArrayLike<number>, prev: ArrayLike<number>, target: ArrayLike<number>, min: ArrayLike<number>,
  max: ArrayLike<number>, margins: ArrayLike<number>, accels: ArrayLike<number>, n: number, box: Float64Array,
  bindingOut: Int32Array | null,
): void {
  const dt = box[0]!;
  let floor = 0;
  let bind = -1;
  for (let i = 0; i < n; i++) {
    const p = prev[i]!;
    if (p === 0) continue;
    const margin = margins[i]!;
    const gap = p > 0 ? max[i]! - margin - q[i]! : q[i]! - (min[i]! + margin);
    if (gap === Infinity) continue;
    const speed = Math.abs(p);
    const a = accels[i]!;
    // Cheap proof that prev is within the bound (see jointLimitScaleInto).
    if (gap > 0 && (a === Infinity ? speed * dt <= gap * 0.9999999999990905
      : (speed * speed) / (2 * a) + (speed * dt) / 2 + (a * dt * dt) / 8 <= gap * (1 - 1e-9))) continue;
    const io = brakeIo;
    io[0] = gap; io[1] = a; io[2] = dt;
    brakingSpeedInto(io);
    const bound = io[3]!;
    if (speed <= bound) continue;
    // Speed toward the limit at f: speed + f·(t − speed), t the target's speed toward it (t ≤ bound).
    const t = p > 0 ? target[i]! : -target[i]!;
    const need = speed - t > 0 ? (speed - bound) / (speed - t) : 1;
    if (need > floor) {
      floor = need > 1 ? 1 : need;
      bind = i;
    }
  }
  if (bindingOut) bindingOut[0] = bind;
  box[0] = floor;
}

/**
 * Stopping horizon of joint rates r braked by one factor within the acceleration limits (as the control
 * step brakes: accelScaleInto toward zero). Each step then removes the same fraction ρ of the original
 * rates, ρ = min_i accel_i·dt/|r_i|, so the speeds are r·(1 − j·ρ), j = 1, 2, …, and every joint travels
 * |r_i|·H in all, counting this step's r_i·dt:
 *   H = dt·(1 + D),   D = Σ_{j ≥ 1} max(0, 1 − j·ρ) = m − ρ·m(m + 1)/2,   m = ceil(1/ρ) − 1   (derived).
 * It is self-consistent: from r·(1 − ρ) the horizon is what is left of this one (D(ρ) = (1 − ρ)·(1 +
 * D(ρ/(1 − ρ))), derived), so a motion that can stop in time can still stop in time one step later.
 * box[0] = dt in, H out. No acceleration limit (Infinity) or no motion: H = dt. Allocation-free.
 */
export function stoppingHorizonInto(rates: ArrayLike<number>, accels: ArrayLike<number>, n: number, box: Float64Array): void {
  const dt = box[0]!;
  let rho = Infinity;
  for (let i = 0; i < n; i++) {
    const v = Math.abs(rates[i]!);
    if (v > 0) {
      const x = (accels[i]! * dt) / v;
      if (x < rho) rho = x;
    }
  }
  let D = 0;
  if (rho < 1) {
    const m = Math.ceil(1 / rho) - 1;
    D = m - (rho * m * (m + 1)) / 2;
    if (!(D > 0)) D = 0;
  }
  box[0] = dt * (1 + D);
}

/**
 * True when every joint moving toward a limit comes to rest before its stand-off (limit − margin) within
 * the horizon H = box[0] of stoppingHorizonInto: |r_i|·H ≤ gap_i (with a 1e-12 relative margin for
 * rounding). A joint at or inside its stand-off may only move away. bindingOut[0] = the first joint that
 * would not stop in time, or −1. Allocation-free.
 */
export function stopsBeforeStandOffs(
  q: ArrayLike<number>, rates: ArrayLike<number>, min: ArrayLike<number>, max: ArrayLike<number>,
  margins: ArrayLike<number>, n: number, box: Float64Array, bindingOut: Int32Array | null,
): boolean {
  const H = box[0]!;
  for (let i = 0; i < n; i++) {
    const v = rates[i]!;
    if (v === 0) continue;
    const margin = margins[i]!;
    const gap = v > 0 ? max[i]! - margin - q[i]! : q[i]! - (min[i]! + margin);
    if (gap === Infinity) continue;
    if (!(Math.abs(v) * H <= gap * (1 - 1e-12))) {
      if (bindingOut) bindingOut[0] = i;
      return false;
    }
  }
  if (bindingOut) bindingOut[0] = -1;
  return true;
}
