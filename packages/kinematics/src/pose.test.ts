import { describe, expect, it } from "vitest";
import { multiply } from "mathjs";
import { demoArms, forwardPose, linkTransform, standardToModified } from "./index.ts";
import type { ArmModel } from "./index.ts";
import { arm6, maxAbsDiff, mixedArm, planar2R, qA, rng, toRows } from "./test-fixtures.ts";

describe("forwardPose", () => {
  it("places the planar 2R tip at (a1 c1 + a2 c12, a1 s1 + a2 s12)", () => {
    // Siciliano et al. 2009, ch. 2 (two-link planar arm direct kinematics).
    const q = [0.3, 0.7];
    const T = forwardPose(planar2R(0.4, 0.3), q);
    expect(T[3]).toBeCloseTo(0.4 * Math.cos(0.3) + 0.3 * Math.cos(1.0), 14);
    expect(T[7]).toBeCloseTo(0.4 * Math.sin(0.3) + 0.3 * Math.sin(1.0), 14);
    expect(T[11]).toBeCloseTo(0, 14);
  });

  it("equals base · A1 · … · An · tool built from the explicit DH link matrices, in both conventions", () => {
    // Derived: the expanded products in pose.ts against a plain mathjs product of the textbook link
    // matrices (Denavit & Hartenberg 1955; Craig 1986) — mathjs is the reference library.
    const next = rng(7);
    for (const convention of ["standard", "modified"] as const) {
      const arm = mixedArm(convention);
      for (let trial = 0; trial < 5; trial++) {
        const q = arm.joints.map(() => 2 * next() - 1);
        let M: number[][] = toRows(arm.base!, 4, 4);
        arm.joints.forEach((j, i) => {
          M = multiply(M, toRows(linkTransform(convention, j, q[i]!), 4, 4)) as number[][];
        });
        M = multiply(M, toRows(arm.tool!, 4, 4)) as number[][];
        expect(maxAbsDiff(forwardPose(arm, q), M.flat())).toBeLessThan(1e-14);
      }
    }
  });

  it("gives the same pose for a standard-DH arm and its modified-DH rewrite", () => {
    // Craig 1986 vs Denavit & Hartenberg 1955: modified row i takes (α_{i-1}, a_{i-1}), last Tx·Rx into the
    // tool (derived; METHODS.md §5 reports 5.6e-17 on ARM-6 [CALC], secondary).
    const next = rng(11);
    const arms: ArmModel[] = [arm6, demoArms[0]!.model, mixedArm("standard")];
    for (const arm of arms) {
      const mod = standardToModified(arm);
      for (let trial = 0; trial < 10; trial++) {
        const q = arm.joints.map(() => 4 * next() - 2);
        expect(maxAbsDiff(forwardPose(arm, q), forwardPose(mod, q))).toBeLessThan(1e-14);
      }
    }
  });

  it("puts the ARM-6 flange at (0.445555, 0.027660, 0.093534) m at q_A", () => {
    // METHODS.md §5 [CALC] — secondary value; the primary checks are the two above.
    const T = forwardPose(arm6, qA);
    expect(T[3]).toBeCloseTo(0.445555, 6);
    expect(T[7]).toBeCloseTo(0.02766, 6);
    expect(T[11]).toBeCloseTo(0.093534, 6);
  });

  it("returns a rigid transform (orthonormal rotation, last row 0 0 0 1)", () => {
    // Derived: products of rigid transforms are rigid.
    const T = forwardPose(mixedArm("modified"), [0.1, 0.2, 0.3, 0.4, 0.5, 0.05, 0.7]);
    const R = toRows(T, 4, 4).slice(0, 3).map((r) => r.slice(0, 3));
    const RRt = multiply(R, [[R[0]![0]!, R[1]![0]!, R[2]![0]!], [R[0]![1]!, R[1]![1]!, R[2]![1]!], [R[0]![2]!, R[1]![2]!, R[2]![2]!]]) as number[][];
    expect(maxAbsDiff(RRt.flat(), [1, 0, 0, 0, 1, 0, 0, 0, 1])).toBeLessThan(1e-14);
    expect(Array.from(T.slice(12))).toEqual([0, 0, 0, 1]);
  });
});
