import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { armSchema } from "@jogwright/shared";
import { call, DEMO_BY_ROLE, harnessSignedInAs, type Harness } from "../../test/harness.ts";

let h: Harness;
let operator: string;
beforeAll(async () => ({ h, cookie: operator } = await harnessSignedInAs(DEMO_BY_ROLE.operator)));
afterAll(() => h.close());

describe("demo arms", () => {
  it("are stored: a six-axis standard-DH arm and a seven-axis modified-DH arm", async () => {
    const res = await call(h, "get", "/api/arms", operator);
    expect(res.status).toBe(200);
    const arms = res.body.arms.map((a: unknown) => armSchema.parse(a));
    const six = arms.find((a: { model: { joints: unknown[] } }) => a.model.joints.length === 6);
    const seven = arms.find((a: { model: { joints: unknown[] } }) => a.model.joints.length === 7);
    expect(six?.model.convention).toBe("standard");
    expect(seven?.model.convention).toBe("modified");
    // PRODUCT.md demo arm, joint 2: a = 0.400 m, theta offset -pi/2, range -100..+145 deg.
    expect(six!.model.joints[1]).toMatchObject({ a: 0.4, theta: -Math.PI / 2 });
    expect(six!.model.joints[1]!.min).toBeCloseTo((-100 * Math.PI) / 180, 12);
    expect(six!.readyPose.map((q: number) => Math.round((q * 180) / Math.PI))).toEqual([0, -20, 30, 0, 50, 0]);
    const one = await call(h, "get", `/api/arms/${six!.id}`, operator);
    expect(one.body.arm.id).toBe(six!.id);
  });

  it("an unknown arm is a 404", async () => {
    expect((await call(h, "get", "/api/arms/999999", operator)).status).toBe(404);
  });
});
