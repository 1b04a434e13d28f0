import { describe, expect, it } from "vitest";
import {
  DEFAULT_ACCEL_PER_SPEED_PER_S, KinematicsInputError, compileArm, createControlState, ratedJointAccel, dampedLeastSquares, dampingFor, demoArms, forwardPose,
  geometricJacobian, manipulability, scaleToCaps, singularValues, toolTwistToWorld, validateArm,
  velocityEllipsoid,
} from "./index.ts";
import type { ArmModel } from "./index.ts";
import { arm6, qA } from "./test-fixtures.ts";

// All checks here are input-validation behaviour of our own API ("common practice, no source").

function expectInputError(f: () => unknown, field: RegExp): void {
  let thrown: unknown;
  try {
    f();
  } catch (e) {
    thrown = e;
  }
  expect(thrown).toBeInstanceOf(KinematicsInputError);
  expect((thrown as KinematicsInputError).field).toMatch(field);
  expect((thrown as Error).message.length).toBeGreaterThan(10);
}

describe("validateArm", () => {
  it("accepts both demo arms", () => {
    for (const d of demoArms) expect(() => validateArm(d.model)).not.toThrow();
  });

  it("rejects an arm with zero joints, naming the joints field", () => {
    expectInputError(() => validateArm({ convention: "standard", joints: [] }), /^joints$/);
  });

  it("rejects an unknown convention", () => {
    expectInputError(() => validateArm({ convention: "craig", joints: arm6.joints }), /^convention$/);
  });

  it("names the joint and field of a NaN DH parameter", () => {
    const bad: ArmModel = { ...arm6, joints: arm6.joints.map((j, i) => (i === 2 ? { ...j, alpha: NaN } : j)) };
    expectInputError(() => validateArm(bad), /^joints\[2\]\.alpha$/);
  });

  it("rejects a joint type that is neither revolute nor prismatic", () => {
    const bad = { ...arm6, joints: [{ ...arm6.joints[0]!, type: "spherical" }] };
    expectInputError(() => validateArm(bad), /^joints\[0\]\.type$/);
  });

  it("rejects min above max and a non-positive max speed", () => {
    expectInputError(() => validateArm({ ...arm6, joints: [{ ...arm6.joints[0]!, min: 1, max: -1 }] }), /min/);
    expectInputError(() => validateArm({ ...arm6, joints: [{ ...arm6.joints[0]!, maxSpeed: 0 }] }), /maxSpeed/);
  });

  it("rejects a tool that is not a rigid transform or has the wrong length", () => {
    expectInputError(() => validateArm({ ...arm6, tool: [1, 0, 0] }), /^tool$/);
    expectInputError(() => validateArm({ ...arm6, tool: [2, 0, 0, 0, 0, 1, 0, 0, 0, 0, 1, 0, 0, 0, 0, 1] }), /^tool$/);
  });
});

describe("public entry points reject degenerate input with a clear error", () => {
  const J = geometricJacobian(arm6, qA);

  it("forwardPose and geometricJacobian reject NaN joints and wrong lengths", () => {
    expectInputError(() => forwardPose(arm6, [0, 0, NaN, 0, 0, 0]), /^q\[2\]$/);
    expectInputError(() => forwardPose(arm6, [0, 0, 0]), /^q$/);
    expectInputError(() => geometricJacobian(arm6, [0, 0, 0, 0, 0, Infinity]), /^q\[5\]$/);
    expectInputError(() => geometricJacobian({ convention: "standard", joints: [] }, []), /^joints$/);
  });

  it("singularValues, manipulability and dampedLeastSquares reject bad shapes, NaN and negative λ", () => {
    expectInputError(() => singularValues(J, 6, 5), /^J$/);
    expectInputError(() => singularValues(J, 0, 6), /^rows$/);
    expectInputError(() => manipulability([1, NaN, 0, 1], 2, 2), /^J\[1\]$/);
    expectInputError(() => dampedLeastSquares(J, 6, 6, [0, 0, 0], 0.1), /^twist$/);
    expectInputError(() => dampedLeastSquares(J, 6, 6, [0, 0, 0, 0, 0, 0], -1), /^lambda$/);
    expectInputError(() => dampedLeastSquares(J, 6, 6, [0, 0, 0, 0, 0, NaN], 0.1), /^twist\[5\]$/);
  });

  it("dampingFor, scaleToCaps, velocityEllipsoid and toolTwistToWorld reject bad numbers", () => {
    expectInputError(() => dampingFor(NaN, { epsilon: 0.1, lambdaMax: 0.05 }), /^sigmaMin$/);
    expectInputError(() => dampingFor(0.1, { epsilon: 0, lambdaMax: 0.05 }), /epsilon/);
    expectInputError(() => scaleToCaps([1, NaN], [1, 1]), /^qdot\[1\]$/);
    expectInputError(() => scaleToCaps([1, 2], [1]), /^caps$/);
    expectInputError(() => scaleToCaps([1, 2], [1, NaN]), /^caps\[1\]$/);
    expectInputError(() => velocityEllipsoid(J, 4, 9), /^rows$/);
    expectInputError(() => toolTwistToWorld(forwardPose(arm6, qA), [0, 0, 0, 0, 0]), /^twist$/);
  });

  it("createControlState rejects a start outside the joint range", () => {
    const arm = demoArms[0]!.model;
    expectInputError(() => createControlState(arm, [0, 0, 0, 0, 3, 0]), /^q0\[4\]$/);
    expectInputError(() => createControlState(arm, [0, 0, 0, 0, 0]), /^q0$/);
  });
});

describe("joint acceleration limits in the arm model", () => {
  it("rejects a maxAccel that is not a positive finite number, naming the joint", () => {
    const joint = { type: "revolute" as const, a: 0, alpha: 0, d: 0, theta: 0, maxSpeed: 2 };
    for (const bad of [0, -1, NaN, Infinity]) {
      expectInputError(() => validateArm({ convention: "standard", joints: [joint, { ...joint, maxAccel: bad }] }), /joints\[1\]\.maxAccel/);
    }
  });

  it("uses maxAccel when given, else 4 × maxSpeed, else no limit", () => {
    // DEFAULT_ACCEL_PER_SPEED_PER_S = 4: rated speed from rest in 0.25 s (common practice, no source).
    expect(DEFAULT_ACCEL_PER_SPEED_PER_S).toBe(4);
    expect(ratedJointAccel({ maxSpeed: 2, maxAccel: 3 })).toBe(3);
    expect(ratedJointAccel({ maxSpeed: 2 })).toBe(8);
    expect(ratedJointAccel({})).toBe(Infinity);
    const joint = { type: "revolute" as const, a: 0, alpha: 0, d: 0, theta: 0 };
    const k = compileArm({ convention: "standard", joints: [{ ...joint, maxSpeed: 2, maxAccel: 3 }, { ...joint, maxSpeed: 2 }, joint] });
    expect(Array.from(k.maxAccel)).toEqual([3, 8, Infinity]);
  });
});
