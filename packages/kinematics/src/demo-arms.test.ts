import { describe, expect, it } from "vitest";
import { demoArms, geometricJacobian, ratedJointAccel, singularValues, validateArm } from "./index.ts";

const DEG = Math.PI / 180;

describe("demoArms", () => {
  it("holds the six-axis arm exactly as tabled in PRODUCT.md, standard DH, tool 0.16 m along z", () => {
    // PRODUCT.md "Demo scenario" table.
    const arm = demoArms.find((a) => a.slug === "cell-arm-6")!;
    expect(arm.model.convention).toBe("standard");
    const table = [
      [0.075, -Math.PI / 2, 0.445, 0, -170, 170, 150], [0.4, 0, 0, -Math.PI / 2, -100, 145, 150],
      [0.035, -Math.PI / 2, 0, 0, -155, 150, 190], [0, Math.PI / 2, 0.42, 0, -185, 185, 300],
      [0, -Math.PI / 2, 0, 0, -120, 120, 300], [0, 0, 0.09, 0, -350, 350, 450],
    ];
    arm.model.joints.forEach((j, i) => {
      const [a, alpha, d, theta, lo, hi, speed] = table[i]!;
      expect([j.type, j.a, j.alpha, j.d, j.theta]).toEqual(["revolute", a, alpha, d, theta]);
      expect(j.min).toBeCloseTo(lo! * DEG, 15);
      expect(j.max).toBeCloseTo(hi! * DEG, 15);
      expect(j.maxSpeed).toBeCloseTo(speed! * DEG, 15);
    });
    expect(Array.from(arm.model.tool!)).toEqual([1, 0, 0, 0, 0, 1, 0, 0, 0, 0, 1, 0.16, 0, 0, 0, 1]);
    expect(arm.readyPose.map((q) => q / DEG).map((x) => Math.round(x * 1e9) / 1e9)).toEqual([0, -20, 30, 0, 50, 0]);
  });

  it("has a seven-axis modified-DH arm, and both ready poses are valid, inside the limits and non-singular", () => {
    // PRODUCT.md "Demo scenario" (second arm); non-singularity checked with our SVD (derived).
    const arm7 = demoArms.find((a) => a.slug === "cell-arm-7")!;
    expect(arm7.model.convention).toBe("modified");
    expect(arm7.model.joints.length).toBe(7);
    for (const d of demoArms) {
      expect(() => validateArm(d.model)).not.toThrow();
      expect(d.name).toMatch(/^Cell arm/);
      d.readyPose.forEach((q, i) => {
        const j = d.model.joints[i]!;
        expect(q).toBeGreaterThan(j.min! + 10 * DEG);
        expect(q).toBeLessThan(j.max! - 10 * DEG);
        expect(j.maxSpeed).toBeGreaterThan(0);
      });
      const n = d.model.joints.length;
      expect(singularValues(geometricJacobian(d.model, d.readyPose), 6, n)[5]).toBeGreaterThan(0.1);
    }
  });

  it("gives every joint of both arms an explicit rated acceleration of 4 × its rated speed per second", () => {
    // Our choice for the invented arms (demo-arms.ts; common practice, no source): rated speed in 0.25 s.
    for (const d of demoArms) {
      for (const j of d.model.joints) {
        expect(j.maxAccel).toBeDefined();
        expect(j.maxAccel).toBeCloseTo(4 * j.maxSpeed!, 12);
        expect(ratedJointAccel(j)).toBe(j.maxAccel);
      }
    }
  });
});
