/**
 * Pareto front of a sweep's trade-off (issue 10, "Sweep"): points with two objectives, both to be made
 * small (e.g. path deviation against peak wrist acceleration). A point is dominated when another is no worse
 * in both and better in one (the textbook definition of Pareto dominance). Non-finite objectives (a run that
 * stalled may report none) are never on the front.
 */
export interface TradeOffPoint {
  x: number;
  y: number;
}

/** True when a dominates b (both objectives minimised). */
export function dominates(a: TradeOffPoint, b: TradeOffPoint): boolean {
  return a.x <= b.x && a.y <= b.y && (a.x < b.x || a.y < b.y);
}

/**
 * Indices of the non-dominated points, sorted by x. O(n log n): sort by x (then y), sweep keeping the best
 * y so far; a point joins the front when its y is strictly below every y before it. Equal points are all
 * kept (neither dominates the other).
 */
export function paretoFront(points: readonly TradeOffPoint[]): number[] {
  const order = points
    .map((p, i) => i)
    .filter((i) => Number.isFinite(points[i]!.x) && Number.isFinite(points[i]!.y))
    .sort((a, b) => points[a]!.x - points[b]!.x || points[a]!.y - points[b]!.y);
  const front: number[] = [];
  let bestY = Infinity;
  let last: TradeOffPoint | null = null;
  for (const i of order) {
    const p = points[i]!;
    if (p.y < bestY) {
      front.push(i);
      bestY = p.y;
      last = p;
    } else if (last && p.x === last.x && p.y === last.y) {
      front.push(i);
    }
  }
  return front;
}
