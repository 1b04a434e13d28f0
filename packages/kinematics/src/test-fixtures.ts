/**
 * Arms and helpers shared by the tests (not exported from index.ts). SI units.
 * ARM-6 is the made-up test arm of METHODS.md (6R anthropomorphic with spherical wrist, standard DH).
 */

import type { ArmModel } from "./arm.ts";

const P = Math.PI;

export function revolute(a: number, alpha: number, d: number, theta = 0) {
  return { type: "revolute" as const, a, alpha, d, theta };
}

/** METHODS.md "ARM-6", standard DH. */
export const arm6: ArmModel = {
  convention: "standard",
  joints: [
    revolute(0, P / 2, 0.3), revolute(0.4, 0, 0), revolute(0, P / 2, 0), revolute(0, -P / 2, 0.35),
    revolute(0, P / 2, 0), revolute(0, 0, 0.08),
  ],
};
export const qA = [0.1, 0.5, -0.4, 0.3, 0.8, -0.2];
export const qB = [0.1, 0.5, -0.4, 0.3, 0.01, -0.2];

/** Planar 2R arm, a1 = 0.4, a2 = 0.3 (standard DH). */
export function planar2R(a1 = 0.4, a2 = 0.3): ArmModel {
  return { convention: "standard", joints: [revolute(a1, 0, 0), revolute(a2, 0, 0)] };
}

/** Anthropomorphic 3R arm of Siciliano et al. 2009 (DH (0, π/2, 0), (a2, 0, 0), (a3, 0, 0)). */
export function anthropomorphic3R(a2 = 0.4, a3 = 0.35): ArmModel {
  return { convention: "standard", joints: [revolute(0, P / 2, 0), revolute(a2, 0, 0), revolute(a3, 0, 0)] };
}

/** A mixed arm with a prismatic joint, base and tool, in the given convention (numbers arbitrary). */
export function mixedArm(convention: "standard" | "modified"): ArmModel {
  const c = Math.cos(0.3), s = Math.sin(0.3);
  return {
    convention,
    joints: [
      revolute(0.1, -P / 2, 0.4, 0.2),
      { type: "prismatic", a: 0.05, alpha: P / 2, d: 0.2, theta: P / 2 },
      revolute(0.3, 0.4, 0.05, -0.3),
      revolute(0, -P / 2, 0.25, 0),
      revolute(0.02, P / 2, 0, 0.1),
      { type: "prismatic", a: 0, alpha: 0.2, d: 0.1, theta: 0 },
      revolute(0, 0, 0.08, 0),
    ],
    // base: rotation about z by 0.3 rad and an offset; tool: 0.12 m along z and 0.03 m along x
    base: [c, -s, 0, 0.5, s, c, 0, -0.2, 0, 0, 1, 0.1, 0, 0, 0, 1],
    tool: [1, 0, 0, 0.03, 0, 1, 0, 0, 0, 0, 1, 0.12, 0, 0, 0, 1],
  };
}

/** Deterministic pseudo-random numbers in [0, 1) (mulberry32; common practice, no source). */
export function rng(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/** rows x cols row-major Float64Array → nested arrays. */
export function toRows(A: ArrayLike<number>, rows: number, cols: number): number[][] {
  const out: number[][] = [];
  for (let r = 0; r < rows; r++) out.push(Array.from({ length: cols }, (_, c) => A[r * cols + c]!));
  return out;
}

export function matVec(A: ArrayLike<number>, rows: number, cols: number, x: ArrayLike<number>): number[] {
  const out: number[] = [];
  for (let r = 0; r < rows; r++) {
    let s = 0;
    for (let c = 0; c < cols; c++) s += A[r * cols + c]! * x[c]!;
    out.push(s);
  }
  return out;
}

export function norm(x: ArrayLike<number>): number {
  let s = 0;
  for (let i = 0; i < x.length; i++) s += x[i]! * x[i]!;
  return Math.sqrt(s);
}

export function maxAbsDiff(a: ArrayLike<number>, b: ArrayLike<number>): number {
  let m = 0;
  for (let i = 0; i < a.length; i++) m = Math.max(m, Math.abs(a[i]! - b[i]!));
  return m;
}

/** Random rows x cols matrix with entries in [-1, 1). */
export function randomMatrix(rows: number, cols: number, next: () => number): Float64Array {
  const A = new Float64Array(rows * cols);
  for (let i = 0; i < A.length; i++) A[i] = 2 * next() - 1;
  return A;
}
