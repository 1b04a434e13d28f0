import {
  compileArm, dampedLeastSquaresInto, forwardPoseInto, geometricJacobianInto, poseErrorInto, svdInto,
  type ArmKernel, type ArmModel,
} from "@jogwright/kinematics";

/**
 * Singularity maps (issue 10): σ_min of the geometric Jacobian (or the condition number σ_max/σ_min) over a
 * grid, for an arm and tool. Two kinds:
 * - joints: over two joints (q4, q5 of a six-axis arm by default) with the others at a given pose;
 * - cartesian: over a plane of TCP positions at a fixed orientation (the given pose's), each point solved
 *   by Newton steps warm-started from its neighbour (a continuation outwards from the given pose); a point
 *   that does not solve within the joint limits is NaN (unreachable from there).
 * Allocation-free per point (buffers made once). The console draws the contours of the version's ε and
 * σ_stop on the grid.
 */

export interface MapGrid {
  /** Row-major values, rows = ys.length, cols = xs.length. NaN: unreachable. */
  values: Float64Array;
  xs: Float64Array;
  ys: Float64Array;
  measure: "sigma-min" | "condition";
}

export interface JointMapRequest {
  measure: "sigma-min" | "condition";
  /** The pose of the joints not swept [rad or m]. */
  pose: readonly number[];
  /** 0-based joints on the x and y axes, and their ranges (defaults: the joints' limits). */
  xJoint: number;
  yJoint: number;
  xRange?: [number, number];
  yRange?: [number, number];
  resolution: number;
}

export interface CartesianMapRequest {
  measure: "sigma-min" | "condition";
  /** The pose whose TCP orientation is held and whose TCP position is the plane's centre. */
  pose: readonly number[];
  /** The plane: "xy", "xz" or "yz" (world axes), half-width [m]. */
  plane: "xy" | "xz" | "yz";
  halfWidthM: number;
  resolution: number;
}

class Scratch {
  readonly J: Float64Array;
  readonly sigma: Float64Array;
  readonly pose = new Float64Array(16);
  constructor(readonly kernel: ArmKernel) {
    this.J = new Float64Array(6 * kernel.n);
    this.sigma = new Float64Array(Math.min(6, kernel.n));
  }
  measureAt(q: ArrayLike<number>, measure: MapGrid["measure"]): number {
    geometricJacobianInto(this.kernel, q, this.J, this.pose);
    svdInto(this.J, 6, this.kernel.n, this.sigma);
    const min = this.sigma[this.sigma.length - 1]!;
    return measure === "sigma-min" ? min : min > 0 ? this.sigma[0]! / min : Infinity;
  }
}

function linspace(lo: number, hi: number, n: number): Float64Array {
  const out = new Float64Array(n);
  for (let i = 0; i < n; i++) out[i] = n === 1 ? lo : lo + ((hi - lo) * i) / (n - 1);
  return out;
}

export function jointMap(arm: ArmModel, req: JointMapRequest): MapGrid {
  const kernel = compileArm(arm);
  const s = new Scratch(kernel);
  const range = (j: number, r?: [number, number]): [number, number] => r ?? [arm.joints[j]!.min ?? -Math.PI, arm.joints[j]!.max ?? Math.PI];
  const xs = linspace(...range(req.xJoint, req.xRange), req.resolution);
  const ys = linspace(...range(req.yJoint, req.yRange), req.resolution);
  const q = Float64Array.from(req.pose);
  const values = new Float64Array(xs.length * ys.length);
  for (let r = 0; r < ys.length; r++) {
    q[req.yJoint] = ys[r]!;
    for (let c = 0; c < xs.length; c++) {
      q[req.xJoint] = xs[c]!;
      values[r * xs.length + c] = s.measureAt(q, req.measure);
    }
  }
  return { values, xs, ys, measure: req.measure };
}

const AXES = { xy: [0, 1], xz: [0, 2], yz: [1, 2] } as const;
const NEWTON_STEPS = 12;
const SOLVED = 1e-9;

export function cartesianMap(arm: ArmModel, req: CartesianMapRequest): MapGrid {
  const kernel = compileArm(arm);
  const n = kernel.n;
  const s = new Scratch(kernel);
  const centre = new Float64Array(16);
  forwardPoseInto(kernel, req.pose, centre);
  const [ax, ay] = AXES[req.plane];
  const cx = centre[ax * 4 + 3]!, cy = centre[ay * 4 + 3]!;
  const xs = linspace(cx - req.halfWidthM, cx + req.halfWidthM, req.resolution);
  const ys = linspace(cy - req.halfWidthM, cy + req.halfWidthM, req.resolution);
  const values = new Float64Array(xs.length * ys.length).fill(Number.NaN);
  const target = Float64Array.from(centre);
  const e = new Float64Array(6);
  const dq = new Float64Array(n);
  const q = new Float64Array(n);
  const lo = kernel.min, hi = kernel.max;
  const cols = xs.length, rows = ys.length;
  /** The solution at each solved cell (n numbers a cell), for warm starts; solved[cell] = 1 when there is one. */
  const solutions = new Float64Array(cols * rows * n);
  const solved = new Uint8Array(cols * rows);
  const solve = (): boolean => {
    for (let it = 0; it < NEWTON_STEPS; it++) {
      geometricJacobianInto(kernel, q, s.J, s.pose);
      poseErrorInto(s.pose, target, e);
      let norm = 0;
      for (let i = 0; i < 6; i++) norm += e[i]! * e[i]!;
      if (norm < SOLVED * SOLVED) {
        for (let i = 0; i < n; i++) if (q[i]! < lo[i]! || q[i]! > hi[i]!) return false;
        return true;
      }
      dampedLeastSquaresInto(s.J, 6, n, e, 1e-4, dq);
      for (let i = 0; i < n; i++) q[i] = q[i]! + dq[i]!;
    }
    return false;
  };
  /** Solves cell (r, c) warm-started from cell `from` (or the given pose), records it. */
  const visit = (r: number, c: number, from: number): void => {
    const cell = r * cols + c;
    if (from >= 0 && solved[from] === 1) q.set(solutions.subarray(from * n, from * n + n));
    else q.set(req.pose);
    target[ax * 4 + 3] = xs[c]!;
    target[ay * 4 + 3] = ys[r]!;
    if (!solve()) return;
    solved[cell] = 1;
    solutions.set(q, cell * n);
    values[cell] = s.measureAt(q, req.measure);
  };
  // A continuation from the given pose at the centre: rows outwards from the middle row, each seeded by the
  // row before it at the middle column, and within a row outwards from the middle column.
  const mid = Math.floor(rows / 2), midC = Math.floor(cols / 2);
  const rowOrder = [mid];
  for (let d = 1; d < rows; d++) {
    if (mid + d < rows) rowOrder.push(mid + d);
    if (mid - d >= 0) rowOrder.push(mid - d);
  }
  for (const r of rowOrder) {
    const seedRow = r === mid ? -1 : r > mid ? r - 1 : r + 1;
    visit(r, midC, seedRow < 0 ? -1 : seedRow * cols + midC);
    for (let c = midC + 1; c < cols; c++) visit(r, c, r * cols + c - 1);
    for (let c = midC - 1; c >= 0; c--) visit(r, c, r * cols + c + 1);
  }
  return { values, xs, ys, measure: req.measure };
}
