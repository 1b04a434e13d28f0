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
 * The exact nearest point of a polyline (points 0 … count−1) to a query point, fast: a tree of bounding
 * capsules over the segments, fan-out 8 at every level (a capsule: the chord from the node's first to its
 * last point, and a radius, the farthest of its points from that chord — a segment lies inside the capsule
 * of its end points, the capsule being convex). A node is skipped when its capsule is at least as far as
 * the best distance so far, which starts at the previous sample's nearest segment; the rest is visited in
 * index order. Capsules rather than spheres: a path is nearly straight over a node, so its capsule is thin,
 * and only the nodes beside the query point survive (spheres let every block within the deviation through:
 * 2.5× slower on a 10-s trial with 8 mm deviation, measured).
 *
 * Consecutive samples are close, so most queries skip the tree: a full search keeps a window of leaves
 * around the segments it scanned (one leaf more on each side) and a lower bound D on the distance from its
 * query point p₀ to every segment outside the window (the smallest of its skipped capsules' distances). A
 * later query point p is at least D − |p − p₀| from them (triangle inequality), so when the previous
 * answer's segment is nearer than that (1e-12 m margin), the best of the window (its leaves' capsules first)
 * is the answer; otherwise the query searches the tree again. On the 10-s trial at 1 kHz: a full search for
 * 8 % of the samples, ~6 capsules and ~10 segments per sample (two levels of 32 without the window: ~77).
 * Segments are compared by their squared distance (the square root, monotonic, is taken of the winner only),
 * so the answer is the segment of least distance, bit for bit the distance a brute-force scan gives
 * (trials.test.ts, on a path whose nearest segment jumps between two legs). No allocation per query.
 */
class NearestOnPolyline {
  private static readonly F = 8;
  /** Skipped capsules remembered per full search (beyond: no window for the next queries). */
  private static readonly MAX_SKIPPED = 512;
  /** Widest window [leaves] (a path that comes back near itself scans leaves far apart: no window). */
  private static readonly MAX_WINDOW_LEAVES = 8;
  /** Margin [m] on the window's bound, far above the rounding of the capsule distances (~1e-16 m). */
  private static readonly MARGIN_M = 1e-12;
  private readonly segments: number;
  /** Capsules per level, 8 numbers a node (capsules()): level ℓ groups 8^(ℓ+1) segments. */
  private readonly levels: Float64Array[] = [];
  private readonly nodeCounts: number[] = [];
  /** Segments a node of each level covers (8^(ℓ+1)). */
  private readonly spans: number[] = [];
  /** The latest answer: distance [m] and segment index (its position along the segment: along). */
  distance = 0;
  segment = 0;
  // The query in progress (fields, read by the helpers below).
  /** The query point [m]. */
  private readonly query = new Float64Array(3);
  private best2 = 0;
  private best = 0;
  private bestT = 0;
  private bestSegment = 0;
  private readonly stack: Int32Array;
  // The full search's skipped capsules (level, node; distance − radius) and the leaves it scanned.
  private readonly skippedNodes = new Int32Array(2 * NearestOnPolyline.MAX_SKIPPED);
  private readonly skippedBounds = new Float64Array(NearestOnPolyline.MAX_SKIPPED);
  private skipped = 0;
  private firstLeaf = 0;
  private lastLeaf = 0;
  // The window: leaves windowFrom … windowTo−1, D (windowBound) and p₀ (windowPoint) (isWindow false: none).
  private isWindow = false;
  private windowFrom = 0;
  private windowTo = 0;
  private windowBound = 0;
  private readonly windowPoint = new Float64Array(3);

  constructor(private readonly r: Float64Array, count: number) {
    this.segments = Math.max(1, count - 1);
    const F = NearestOnPolyline.F;
    // Node i of a level covering `span` segments: points i·span … min((i+1)·span, count − 1).
    for (let span = F, nodes = Math.ceil(this.segments / F); ; span *= F, nodes = Math.ceil(nodes / F)) {
      this.levels.push(capsules(nodes, span, count, r));
      this.nodeCounts.push(nodes);
      this.spans.push(span);
      if (nodes <= F) break;
    }
    this.stack = new Int32Array(2 * F * (this.levels.length + 1));
  }

  find(p: Float64Array, k: number, hint: number): void {
    const F = NearestOnPolyline.F;
    const lastPoint = this.segments; // segment j joins points j and j+1 ≤ lastPoint (one point: j = 0 … 0)
    const h = Math.min(hint, this.segments - 1);
    const q = this.query;
    q[0] = p[k * 3]!;
    q[1] = p[k * 3 + 1]!;
    q[2] = p[k * 3 + 2]!;
    this.best2 = Infinity;
    this.bestSegment = h;
    this.scanSegments(h, h + 1, lastPoint);
    let isDone = false;
    if (this.isWindow) {
      const w = this.windowPoint;
      const dx = q[0]! - w[0]!, dy = q[1]! - w[1]!, dz = q[2]! - w[2]!;
      const reach = this.windowBound - Math.sqrt(dx * dx + dy * dy + dz * dz) - NearestOnPolyline.MARGIN_M;
      if (this.best < reach) {
        // The window's leaves, each skipped when its capsule is no nearer than the best (the hint's, first).
        for (let leaf = this.windowFrom; leaf < this.windowTo; leaf++) {
          if (this.isFarther(0, leaf)) continue;
          this.scanSegments(leaf * F, Math.min((leaf + 1) * F, this.segments), lastPoint);
        }
        isDone = this.best < reach;
      }
    }
    if (!isDone) {
      // Depth first in index order. A node is tested before it is pushed (the stack holds the survivors as
      // (level, node) pairs, children pushed last to first); a survivor's children are tested in a row.
      this.skipped = 0;
      this.firstLeaf = Infinity;
      this.lastLeaf = -1;
      const stack = this.stack;
      const levels = this.levels, counts = this.nodeCounts;
      let sp = 0;
      const top = levels.length - 1;
      sp = this.pushSurvivors(top, 0, counts[top]!, sp);
      while (sp > 0) {
        const node = stack[--sp]!;
        const level = stack[--sp]!;
        if (level === 0) {
          if (node < this.firstLeaf) this.firstLeaf = node;
          if (node > this.lastLeaf) this.lastLeaf = node;
          this.scanSegments(node * F, Math.min((node + 1) * F, this.segments), lastPoint);
        } else {
          sp = this.pushSurvivors(level - 1, node * F, Math.min(node * F + F, counts[level - 1]!), sp);
        }
      }
      this.makeWindow();
    }
    this.segment = this.bestSegment;
    this.distance = this.best;
  }

  /** The latest answer's position along its segment [m]. */
  get along(): number {
    const r = this.r;
    const j = this.bestSegment;
    const b = Math.min(j + 1, this.segments);
    const ux = r[b * 3]! - r[j * 3]!, uy = r[b * 3 + 1]! - r[j * 3 + 1]!, uz = r[b * 3 + 2]! - r[j * 3 + 2]!;
    return this.bestT * Math.sqrt(ux * ux + uy * uy + uz * uz);
  }

  /**
   * After a full search from the query point: the window of the leaves it scanned, one more on each side, and the
   * least distance − radius of the capsules it skipped that are not inside the window.
   */
  private makeWindow(): void {
    const F = NearestOnPolyline.F;
    const leaves = this.nodeCounts[0]!;
    this.isWindow = false;
    // The best segment's leaf too (it may have been skipped as a tie when the best came from the hint).
    const bestLeaf = Math.floor(this.bestSegment / F);
    if (bestLeaf < this.firstLeaf) this.firstLeaf = bestLeaf;
    if (bestLeaf > this.lastLeaf) this.lastLeaf = bestLeaf;
    if (this.skipped < 0 || this.lastLeaf - this.firstLeaf + 3 > NearestOnPolyline.MAX_WINDOW_LEAVES) return;
    const fromLeaf = Math.max(0, this.firstLeaf - 1), toLeaf = Math.min(leaves, this.lastLeaf + 2);
    const from = fromLeaf * F, to = Math.min(toLeaf * F, this.segments);
    let bound = Infinity;
    for (let i = 0; i < this.skipped; i++) {
      // Node i of level ℓ covers segments node·8^(ℓ+1) … (node+1)·8^(ℓ+1) − 1.
      const span = this.spans[this.skippedNodes[2 * i]!]!, node = this.skippedNodes[2 * i + 1]!;
      if (node * span >= from && Math.min((node + 1) * span, this.segments) <= to) continue;
      if (this.skippedBounds[i]! < bound) bound = this.skippedBounds[i]!;
    }
    this.isWindow = true;
    this.windowFrom = fromLeaf;
    this.windowTo = toLeaf;
    this.windowBound = bound;
    this.windowPoint.set(this.query);
  }

  /**
   * Pushes the nodes from … to−1 of a level whose capsules are nearer than the best so far, last to first;
   * returns the new stack size. Skipped when (distance to the chord − radius) ≥ best, compared squared:
   * d² ≥ best² + rad·(2·best + rad) (no square root or division here; best² itself, so a tie — a capsule of
   * no radius as far as the best segment, e.g. on a path that stands still — is skipped as unsquared). A
   * skipped capsule's distance − radius is kept for the window (makeWindow).
   */
  private pushSurvivors(level: number, from: number, to: number, sp: number): number {
    const c = this.levels[level]!, stack = this.stack;
    const q = this.query;
    const x = q[0]!, y = q[1]!, z = q[2]!;
    const best2 = this.best2, best = this.best;
    for (let i = to - 1; i >= from; i--) {
      const o = i * 8;
      const px = x - c[o]!, py = y - c[o + 1]!, pz = z - c[o + 2]!;
      const ux = c[o + 3]!, uy = c[o + 4]!, uz = c[o + 5]!;
      let t = (px * ux + py * uy + pz * uz) * c[o + 6]!;
      t = t < 0 ? 0 : t > 1 ? 1 : t;
      const dx = px - t * ux, dy = py - t * uy, dz = pz - t * uz;
      const rad = c[o + 7]!;
      const d2 = dx * dx + dy * dy + dz * dz;
      if (d2 >= best2 + rad * (2 * best + rad)) {
        const m = this.skipped;
        if (m >= 0 && m < NearestOnPolyline.MAX_SKIPPED) {
          this.skippedNodes[2 * m] = level;
          this.skippedNodes[2 * m + 1] = i;
          this.skippedBounds[m] = Math.sqrt(d2) - rad;
          this.skipped = m + 1;
        } else {
          this.skipped = -1; // too many to remember: no window
        }
        continue;
      }
      stack[sp++] = level;
      stack[sp++] = i;
    }
    return sp;
  }

  /** Node i of a level is no nearer than the best so far (pushSurvivors' test). */
  private isFarther(level: number, i: number): boolean {
    const c = this.levels[level]!;
    const o = i * 8;
    const q = this.query;
    const px = q[0]! - c[o]!, py = q[1]! - c[o + 1]!, pz = q[2]! - c[o + 2]!;
    const ux = c[o + 3]!, uy = c[o + 4]!, uz = c[o + 5]!;
    let t = (px * ux + py * uy + pz * uz) * c[o + 6]!;
    t = t < 0 ? 0 : t > 1 ? 1 : t;
    const dx = px - t * ux, dy = py - t * uy, dz = pz - t * uz;
    const rad = c[o + 7]!;
    return dx * dx + dy * dy + dz * dz >= this.best2 + rad * (2 * this.best + rad);
  }

  /** Segments from … to−1 against the best so far (squared distances; strictly closer wins). */
  private scanSegments(from: number, to: number, lastPoint: number): void {
    const r = this.r;
    const q = this.query;
    const x = q[0]!, y = q[1]!, z = q[2]!;
    let best2 = this.best2;
    for (let j = from; j < to; j++) {
      const a = j * 3, b = (j + 1 < lastPoint ? j + 1 : lastPoint) * 3;
      const ax = r[a]!, ay = r[a + 1]!, az = r[a + 2]!;
      const ux = r[b]! - ax, uy = r[b + 1]! - ay, uz = r[b + 2]! - az;
      const px = x - ax, py = y - ay, pz = z - az;
      const len2 = ux * ux + uy * uy + uz * uz;
      let t = len2 > 0 ? (px * ux + py * uy + pz * uz) / len2 : 0;
      t = t < 0 ? 0 : t > 1 ? 1 : t;
      const dx = px - t * ux, dy = py - t * uy, dz = pz - t * uz;
      const d2 = dx * dx + dy * dy + dz * dz;
      if (d2 < best2) {
        best2 = d2;
        this.bestT = t;
        this.bestSegment = j;
      }
    }
    if (best2 < this.best2) {
      this.best2 = best2;
      this.best = Math.sqrt(best2);
    }
  }
}

/** Capsules of `nodes` nodes of `span` segments each over the polyline r of `count` points. */
function capsules(nodes: number, span: number, count: number, r: Float64Array): Float64Array {
  // Per capsule: a (3), u = b − a (3), 1/|u|² (1; 0 for a chord of no length), radius (1).
  const c = new Float64Array(nodes * 8);
  for (let i = 0; i < nodes; i++) {
    const first = i * span, last = Math.min((i + 1) * span, count - 1);
    const ax = r[first * 3]!, ay = r[first * 3 + 1]!, az = r[first * 3 + 2]!;
    const ux = r[last * 3]! - ax, uy = r[last * 3 + 1]! - ay, uz = r[last * 3 + 2]! - az;
    const len2 = ux * ux + uy * uy + uz * uz;
    // The farthest point from the chord, squared distances compared (one square root a capsule).
    let rad2 = 0;
    for (let j = first; j <= last; j++) {
      const px = r[j * 3]! - ax, py = r[j * 3 + 1]! - ay, pz = r[j * 3 + 2]! - az;
      let t = len2 > 0 ? (px * ux + py * uy + pz * uz) / len2 : 0;
      t = t < 0 ? 0 : t > 1 ? 1 : t;
      const dx = px - t * ux, dy = py - t * uy, dz = pz - t * uz;
      const d2 = dx * dx + dy * dy + dz * dz;
      if (d2 > rad2) rad2 = d2;
    }
    const rad = Math.sqrt(rad2);
    const o = i * 8;
    c[o] = ax; c[o + 1] = ay; c[o + 2] = az; c[o + 3] = ux; c[o + 4] = uy; c[o + 5] = uz; c[o + 6] = len2 > 0 ? 1 / len2 : 0; c[o + 7] = rad;
  }
  return c;
}
