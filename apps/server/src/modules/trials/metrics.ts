import type { TrialMetrics } from "@jogwright/shared";
import type { TrialSeries } from "./runner.ts";

type WristBranch = NonNullable<TrialMetrics["singularity"]["wristBranch"]>;

/**
 * The tuning bench's metrics of one run, computed from its stored series alone (so anyone can recompute
 * them from a stored run; trials.test.ts does, independently). SI units; names carry them.
 *
 * Definitions (derived; the evidence table uses the same ones):
 * - path deviation: distance of the TCP from the commanded path (the polyline of the reference positions,
 *   the integral of the twist the gate handed to the control step), sampled every tick until the enabling
 *   control is released; lag: how far the nearest point of that path is behind the reference at the release
 *   (arc length along the path);
 * - residual: |v − J·q̇|, commanded against achieved twist, linear and angular parts;
 * - joint acceleration and jerk: backward differences of q̇ per tick (|Δq̇|/dt, |Δq̈|/dt);
 * - time cap-bound: ticks whose step was held back by a joint-rate cap, × dt;
 * - wrist branch: the sign of the wrist's middle joint (q5 of a six-axis arm) at the start and at the end:
 *   damped least squares tends to carry it through zero rather than flip the wrist.
 */
export type { TrialMetrics, WristBranch };

export interface MetricsContext {
  /** Effective joint-rate caps (profile cap and the arm's rated speed, the smaller) [rad/s or m/s]. */
  jointCaps: ArrayLike<number>;
  /** The damping scheme's ε (singular-value scheme), else null. */
  epsilonM: number | null;
  /** 0-based index of the wrist's middle joint, or null when the arm has no spherical wrist of that form. */
  wristJoint: number | null;
}

/** Lag above this share of the commanded path, at the release, counts as a stall (common practice, no source). */
export const STALL_LAG_SHARE = 0.5;

export function computeTrialMetrics(s: TrialSeries, ctx: MetricsContext): TrialMetrics {
  const n = s.n;
  const dt = 1 / s.tickRateHz;
  const end = Math.max(1, s.releaseIndex); // samples 0 … end−1 are the trial proper

  // --- path ---------------------------------------------------------------------------------------
  const arc = new Float64Array(end);
  for (let k = 1; k < end; k++) {
    arc[k] = arc[k - 1]! + dist3(s.reference, k - 1, s.reference, k);
  }
  let maxDev = 0, sumSq = 0, lag = 0;
  const nearest = new NearestOnPolyline(s.reference, end);
  let m = 0; // the previous sample's nearest segment: a tight first bound for the exact search
  for (let k = 0; k < end; k++) {
    nearest.find(s.tcp, k, m);
    m = nearest.segment;
    const d = nearest.distance;
    if (d > maxDev) maxDev = d;
    sumSq += d * d;
    if (k === end - 1) lag = Math.max(0, arc[k]! - (arc[m]! + nearest.along));
  }
  let maxOrient = 0, maxResLin = 0, maxResAng = 0;
  for (let k = 0; k < end; k++) {
    if (s.orientationError[k]! > maxOrient) maxOrient = s.orientationError[k]!;
    const o = k * 6;
    const rl = Math.sqrt(sq(s.commanded[o]! - s.achieved[o]!) + sq(s.commanded[o + 1]! - s.achieved[o + 1]!) + sq(s.commanded[o + 2]! - s.achieved[o + 2]!));
    const ra = Math.sqrt(sq(s.commanded[o + 3]! - s.achieved[o + 3]!) + sq(s.commanded[o + 4]! - s.achieved[o + 4]!) + sq(s.commanded[o + 5]! - s.achieved[o + 5]!));
    if (rl > maxResLin) maxResLin = rl;
    if (ra > maxResAng) maxResAng = ra;
  }

  // --- joints (the whole run, the final stop included) ----------------------------------------------
  const peakRate = new Array<number>(n).fill(0);
  const peakAccel = new Array<number>(n).fill(0);
  const peakJerk = new Array<number>(n).fill(0);
  for (let i = 0; i < n; i++) {
    let prevAccel = 0;
    for (let k = 0; k < s.count; k++) {
      const v = s.qdot[k * n + i]!;
      if (Math.abs(v) > peakRate[i]!) peakRate[i] = Math.abs(v);
      if (k === 0) continue;
      const a = (v - s.qdot[(k - 1) * n + i]!) / dt;
      if (Math.abs(a) > peakAccel[i]!) peakAccel[i] = Math.abs(a);
      if (k >= 2) {
        const j = Math.abs(a - prevAccel) / dt;
        if (j > peakJerk[i]!) peakJerk[i] = j;
      }
      prevAccel = a;
    }
  }
  const peakFraction = peakRate.map((v, i) => {
    const cap = ctx.jointCaps[i]!;
    return cap > 0 && cap < Infinity ? v / cap : 0;
  });
  let capBound = 0, guardHeld = 0, guardStops = 0, belowEps = 0, minSigma = Infinity, maxLambda = 0, faults = 0;
  let worstStop = 0, worstAt = 0;
  for (let k = 0; k < s.count; k++) {
    capBound += s.capBound[k]!;
    guardHeld += s.guardHeld[k]!;
    if (s.guardHeld[k] === 1 && (k === 0 || s.guardHeld[k - 1] === 0)) guardStops++;
    faults += s.fault[k]!;
    const sigma = s.sigmaMin[k]!;
    if (sigma < minSigma) minSigma = sigma;
    if (ctx.epsilonM !== null && sigma < ctx.epsilonM) belowEps++;
    if (s.lambda[k]! > maxLambda) maxLambda = s.lambda[k]!;
    if (k < end && s.stopDistance[k]! > worstStop) {
      worstStop = s.stopDistance[k]!;
      worstAt = s.t[k]!;
    }
  }

  // --- the final stop -------------------------------------------------------------------------------
  let stopDistance = 0;
  const release = Math.min(s.releaseIndex, s.count - 1);
  for (let k = release + 1; k < s.count; k++) stopDistance += dist3(s.tcp, k - 1, s.tcp, k);
  const stopTime = s.count > 0 ? s.t[s.count - 1]! - s.t[Math.max(0, release)]! : 0;

  const wristBranch = ctx.wristJoint === null ? null : branchOf(s, ctx.wristJoint, end);

  // --- finished or stalled --------------------------------------------------------------------------
  const pathLength = arc[end - 1] ?? 0;
  let stalledReason: string | null = null;
  let stallKind: TrialMetrics["stallKind"] = null;
  if (faults > 0) [stallKind, stalledReason] = ["fault", "a numerical fault zeroed the joint rates"];
  else if (s.guardHeld[end - 1] === 1) [stallKind, stalledReason] = ["guard", "held before the singular region by the stop-before guard"];
  else if (pathLength > 0 && lag > STALL_LAG_SHARE * pathLength) [stallKind, stalledReason] = ["lag", `the arm fell more than ${STALL_LAG_SHARE * 100} % of the path behind`];

  return {
    durationS: s.count > 0 ? s.t[s.count - 1]! : 0,
    finished: stalledReason === null,
    stalledReason,
    stallKind,
    path: {
      maxDeviationM: maxDev,
      rmsDeviationM: Math.sqrt(sumSq / end),
      lagM: lag,
      maxOrientationErrorRad: maxOrient,
      maxResidualLinearMPerS: maxResLin,
      maxResidualAngularRadPerS: maxResAng,
    },
    joints: { peakRateRadPerS: peakRate, peakRateFraction: peakFraction, peakAccelRadPerS2: peakAccel, peakJerkRadPerS3: peakJerk, capBoundS: capBound * dt },
    singularity: {
      minSigma: Number.isFinite(minSigma) ? minSigma : 0,
      timeBelowEpsilonS: ctx.epsilonM === null ? null : belowEps * dt,
      maxLambdaM: maxLambda,
      guardStops,
      guardHeldS: guardHeld * dt,
      wristBranch,
    },
    stopping: { worstPredictedDistanceM: worstStop, worstAtS: worstAt, finalStopTimeS: stopTime, finalStopDistanceM: stopDistance },
  };
}

function sq(x: number): number {
  return x * x;
}

function branchOf(s: TrialSeries, joint: number, end: number): WristBranch {
  const n = s.n;
  const start = s.q[joint]!;
  const last = s.q[(end - 1) * n + joint]!;
  let crossed = false;
  for (let k = 1; k < end && !crossed; k++) {
    const a = s.q[(k - 1) * n + joint]!, b = s.q[k * n + joint]!;
    if ((a > 0 && b <= 0) || (a < 0 && b >= 0)) crossed = true;
  }
  return { joint: joint + 1, startRad: start, endRad: last, crossedZero: crossed };
}

function dist3(a: Float64Array, i: number, b: Float64Array, j: number): number {
  const x = a[i * 3]! - b[j * 3]!, y = a[i * 3 + 1]! - b[j * 3 + 1]!, z = a[i * 3 + 2]! - b[j * 3 + 2]!;
  return Math.sqrt(x * x + y * y + z * z);
}

/**
 * The exact nearest point of a polyline (points 0 … count−1) to a query point, fast: segments are grouped
 * in blocks of 32 and blocks in groups of 32, each with a bounding capsule (the chord from its first to its
 * last point, and a radius: the farthest of its points from that chord — a segment lies inside the capsule
 * of its end points, the capsule being convex), and a block or group is skipped when its capsule is farther
 * than the best distance so far, which starts at the previous sample's nearest segment. Capsules rather than
 * spheres: a path is nearly straight over a block, so its capsule is thin, and only the block beside the
 * query point survives (spheres let every block within the deviation through: 2.5× slower on a 10-s trial
 * with 8 mm deviation, measured). Exact (a brute-force scan agrees: trials.test.ts). No allocation per query.
 */
class NearestOnPolyline {
  private static readonly B = 32;
  private readonly segments: number;
  private readonly blocks: Bounds;
  private readonly groups: Bounds;
  /** The latest answer: distance, position along its segment [m], segment index. */
  distance = 0;
  along = 0;
  segment = 0;

  constructor(private readonly r: Float64Array, count: number) {
    this.segments = Math.max(1, count - 1);
    const B = NearestOnPolyline.B;
    // Points first … last of block b (segment j joins points j and j+1).
    this.blocks = capsules(Math.ceil(this.segments / B), (b) => [b * B, Math.min((b + 1) * B, count - 1)], r);
    this.groups = capsules(Math.ceil(this.blocks.count / B), (g) => [g * B * B, Math.min((g + 1) * B * B, count - 1)], r);
  }

  find(p: Float64Array, k: number, hint: number): void {
    const B = NearestOnPolyline.B;
    const lastPoint = this.segments; // segment j joins points j and j+1 ≤ lastPoint (one point: j = 0 … 0)
    this.segment = Math.min(hint, this.segments - 1);
    segmentDistance(p, k, this.r, this.segment, Math.min(this.segment + 1, lastPoint));
    this.distance = scratch.distance;
    this.along = scratch.along;
    const px = p[k * 3]!, py = p[k * 3 + 1]!, pz = p[k * 3 + 2]!;
    for (let g = 0; g < this.groups.count; g++) {
      if (this.groups.farther(g, px, py, pz, this.distance)) continue;
      const lastBlock = Math.min((g + 1) * B, this.blocks.count);
      for (let b = g * B; b < lastBlock; b++) {
        if (this.blocks.farther(b, px, py, pz, this.distance)) continue;
        const to = Math.min((b + 1) * B, this.segments);
        for (let j = b * B; j < to; j++) {
          segmentDistance(p, k, this.r, j, Math.min(j + 1, lastPoint));
          if (scratch.distance < this.distance) {
            this.distance = scratch.distance;
            this.along = scratch.along;
            this.segment = j;
          }
        }
      }
    }
  }
}

interface Bounds {
  count: number;
  farther(i: number, x: number, y: number, z: number, distance: number): boolean;
}

/** Distance from (x, y, z) to the segment a–b given as a and u = b − a. */
function toChord(x: number, y: number, z: number, ax: number, ay: number, az: number, ux: number, uy: number, uz: number, len2: number): number {
  const px = x - ax, py = y - ay, pz = z - az;
  let t = len2 > 0 ? (px * ux + py * uy + pz * uz) / len2 : 0;
  t = t < 0 ? 0 : t > 1 ? 1 : t;
  const dx = px - t * ux, dy = py - t * uy, dz = pz - t * uz;
  return Math.sqrt(dx * dx + dy * dy + dz * dz);
}

function capsules(count: number, span: (i: number) => [number, number], r: Float64Array): Bounds {
  // Per capsule: a (3), u = b − a (3), |u|² (1), radius (1).
  const c = new Float64Array(count * 8);
  for (let i = 0; i < count; i++) {
    const [first, last] = span(i);
    const ax = r[first * 3]!, ay = r[first * 3 + 1]!, az = r[first * 3 + 2]!;
    const ux = r[last * 3]! - ax, uy = r[last * 3 + 1]! - ay, uz = r[last * 3 + 2]! - az;
    const len2 = ux * ux + uy * uy + uz * uz;
    let rad = 0;
    for (let j = first; j <= last; j++) rad = Math.max(rad, toChord(r[j * 3]!, r[j * 3 + 1]!, r[j * 3 + 2]!, ax, ay, az, ux, uy, uz, len2));
    c.set([ax, ay, az, ux, uy, uz, len2, rad], i * 8);
  }
  return {
    count,
    farther(i, x, y, z, distance) {
      const o = i * 8;
      return toChord(x, y, z, c[o]!, c[o + 1]!, c[o + 2]!, c[o + 3]!, c[o + 4]!, c[o + 5]!, c[o + 6]!) - c[o + 7]! >= distance;
    },
  };
}

/** segmentDistance's answer (no allocation per call). */
const scratch = { distance: 0, along: 0 };

function segmentDistance(p: Float64Array, k: number, r: Float64Array, a: number, b: number): void {
  const ax = r[a * 3]!, ay = r[a * 3 + 1]!, az = r[a * 3 + 2]!;
  const ux = r[b * 3]! - ax, uy = r[b * 3 + 1]! - ay, uz = r[b * 3 + 2]! - az;
  const px = p[k * 3]! - ax, py = p[k * 3 + 1]! - ay, pz = p[k * 3 + 2]! - az;
  const len2 = ux * ux + uy * uy + uz * uz;
  let t = len2 > 0 ? (px * ux + py * uy + pz * uz) / len2 : 0;
  t = t < 0 ? 0 : t > 1 ? 1 : t;
  const dx = px - t * ux, dy = py - t * uy, dz = pz - t * uz;
  scratch.distance = Math.sqrt(dx * dx + dy * dy + dz * dz);
  scratch.along = t * Math.sqrt(len2);
}
