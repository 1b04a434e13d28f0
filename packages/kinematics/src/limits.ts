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
 * Joint-limit slow-down as one factor for all joints. For a joint moving toward a limit, let
 * g = distance to (limit − margin_i), the stand-off point. The speed toward the limit may be at most
 *   min(cap_i · clamp(g/zone_i, 0, 1), g/dt)         (0 when g ≤ 0)
 * so joints slow linearly through the zone (common practice, no source) and one Euler step q + dt·qdot can
 * never pass limit − margin (derived). With no cap (Infinity) the zone scales the joint's own speed by
 * clamp(g/zone, 0, 1). Joints moving away from a limit are never slowed. Returns s ∈ [0, 1];
 * bindingOut[0] = the binding joint or −1. Allocation-free.
 */
export function jointLimitScale(
  q: ArrayLike<number>, qdot: ArrayLike<number>, min: ArrayLike<number>, max: ArrayLike<number>,
  caps: ArrayLike<number>, n: number, margins: ArrayLike<number>, zones: ArrayLike<number>, dt: number,
  bindingOut: Int32Array | null = null,
): number {
  scaleBox[0] = dt;
  jointLimitScaleInto(q, qdot, min, max, caps, n, margins, zones, scaleBox, bindingOut);
  return scaleBox[0]!;
}

/** jointLimitScale with dt passed in and s returned through box[0] (allocation-free in V8). */
export function jointLimitScaleInto(
  q: ArrayLike<number>, qdot: ArrayLike<number>, min: ArrayLike<number>, max: ArrayLike<number>,
  caps: ArrayLike<number>, n: number, margins: ArrayLike<number>, zones: ArrayLike<number>, box: Float64Array,
  bindingOut: Int32Array | null,
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
    let allowed: number;
    if (!(gap > 0)) allowed = 0;
    else {
      const zone = zones[i]!;
      const ramp = zone > 0 ? Math.min(1, gap / zone) : 1;
      const cap = caps[i]!;
      allowed = Math.min(cap === Infinity ? speed * ramp : cap * ramp, gap / dt);
    }
    if (speed * s > allowed) {
      s = allowed / speed;
      bind = i;
    }
  }
  if (bindingOut) bindingOut[0] = bind;
  box[0] = s;
}
