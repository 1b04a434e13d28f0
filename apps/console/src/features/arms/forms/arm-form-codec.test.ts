import { describe, expect, it } from "vitest";
import { toolTransform, type ArmModel } from "@jogwright/shared";
import { itPutsServerPathsOnFields, refusedPaths } from "../../../lib/form-codec.test-support.ts";
import { armFieldOfPath, armFormCodec, armFormValuesOf, armModelOfUi, NOT_GIVEN } from "./arm-form-codec.ts";
import { poseUiOfTransform, transformOfPoseUi } from "./pose-units.ts";
import { toolFieldOfPath, toolFormCodec, toolFormValuesOf } from "./tool-form-codec.ts";

// A small arm of our own: two revolute joints and a prismatic one, a base turned 90° about z and lifted
// 500 mm, a tool 160 mm along the flange z axis pitched 30°.
const model: ArmModel = {
  convention: "standard",
  joints: [
    { type: "revolute", a: 0, alpha: Math.PI / 2, d: 0.3, theta: 0, min: -Math.PI, max: Math.PI, maxSpeed: Math.PI, maxAccel: 4 * Math.PI },
    { type: "revolute", a: 0.4, alpha: 0, d: 0, theta: Math.PI / 2, min: -1.5, max: 1.5, maxSpeed: 2 },
    { type: "prismatic", a: 0, alpha: 0, d: 0, theta: 0, min: 0, max: 0.25, maxSpeed: 0.5 },
  ],
  base: toolTransform([0, 0, 0.5], [0, 0, Math.PI / 2]),
  tool: toolTransform([0, 0, 0.16], [0, Math.PI / 6, 0]),
};

const closeTo = (a: readonly number[], b: readonly number[], digits: number) => a.forEach((v, i) => expect(v).toBeCloseTo(b[i]!, digits));

describe("the arm form's units", () => {
  it("shows lengths in mm, angles in deg, a revolute joint's range, speed and acceleration in deg, deg/s, deg/s², a prismatic one's in mm, mm/s", () => {
    const v = armFormValuesOf({ name: "Test arm", description: "", model });
    expect(v.joints[0]).toEqual({ type: "revolute", aMm: 0, alphaDeg: 90, dMm: 300, thetaDeg: 0, min: -180, max: 180, speed: 180, accel: 720 });
    expect(v.joints[1]!.aMm).toBe(400);
    expect(v.joints[1]!.accel).toBe(NOT_GIVEN); // not given: an empty box
    expect(v.joints[2]).toMatchObject({ type: "prismatic", min: 0, max: 250, speed: 500 });
    // Base: 500 mm up, yaw 90°; tool: 160 mm along z, pitch 30° (R = Rz·Ry·Rx, derived).
    expect(v.base).toEqual({ xMm: 0, yMm: 0, zMm: 500, rollDeg: 0, pitchDeg: 0, yawDeg: 90 });
    expect(v.tool).toEqual({ xMm: 0, yMm: 0, zMm: 160, rollDeg: 0, pitchDeg: 30, yawDeg: 0 });
  });

  it("decodes the UI values back to the same SI model (round trip within 1e-8: six decimals of a mm or a degree, derived)", () => {
    const codec = armFormCodec({ isEdit: false });
    const out = codec.decode(armFormValuesOf({ name: " Test arm ", description: "d", model }));
    expect(out.name).toBe("Test arm");
    out.model.joints.forEach((j, i) => {
      const want = model.joints[i]!;
      for (const key of ["a", "alpha", "d", "theta", "min", "max", "maxSpeed", "maxAccel"] as const) {
        if (want[key] === undefined) expect(j[key]).toBeUndefined();
        else expect(j[key]).toBeCloseTo(want[key], 7);
      }
    });
    closeTo(out.model.base!, model.base!, 7);
    closeTo(out.model.tool!, model.tool!, 7);
  });

  it("roll-pitch-yaw with all three angles survives transform → form → transform", () => {
    const m = toolTransform([0.01, -0.02, 0.2], [0.3, -0.4, 2.5]);
    const ui = poseUiOfTransform(m);
    expect(ui.rollDeg).toBeCloseTo((0.3 * 180) / Math.PI, 6);
    expect(ui.yawDeg).toBeCloseTo((2.5 * 180) / Math.PI, 6);
    closeTo(transformOfPoseUi(ui), m, 7);
  });

  it("reads an empty or cleared optional box as not given", () => {
    const v = armFormValuesOf({ name: "x", description: "", model });
    const joints = [{ ...v.joints[0]!, speed: NOT_GIVEN, accel: Number.NaN }];
    const out = armModelOfUi({ ...v, joints });
    expect(out.joints[0]!.maxSpeed).toBeUndefined();
    expect(out.joints[0]!.maxAccel).toBeUndefined();
    expect(out.joints[0]!.min).toBeCloseTo(-Math.PI, 9);
  });

  it("leaves out a base and tool that are all zeros (identity)", () => {
    const plain = armModelOfUi({ ...armFormValuesOf({ name: "x", description: "", model: { ...model, base: undefined, tool: undefined } }) });
    expect(plain.base).toBeUndefined();
    expect(plain.tool).toBeUndefined();
  });

  it("refuses what the server refuses, on the UI field: min above max, an empty a, no joints, an edit without a note", () => {
    const codec = armFormCodec({ isEdit: true });
    const v = armFormValuesOf({ name: "Test arm", description: "", model });
    const bad = { ...v, joints: v.joints.map((j, i) => (i === 1 ? { ...j, min: 100, max: 50 } : j)) };
    const result = codec.safeDecode(bad);
    expect(result.success).toBe(false);
    expect(refusedPaths(result)).toEqual(["joints.1.min", "note"]);
    // An empty box is said first (the shared schema's checks follow once every box holds a number).
    const empty = codec.safeDecode({ ...v, note: "fine", joints: v.joints.map((j, i) => (i === 2 ? { ...j, aMm: Number.NaN } : j)) });
    expect(empty.error!.issues.map((i) => [i.path.join("."), i.message])).toEqual([["joints.2.aMm", "Enter a number in mm"]]);
    const none = codec.safeDecode({ ...v, note: "fine", joints: [] });
    expect(refusedPaths(none)).toContain("joints");
    const unnamed = codec.safeDecode({ ...v, name: " ", note: "fine" });
    expect(refusedPaths(unnamed)).toContain("name");
  });

  itPutsServerPathsOnFields(armFieldOfPath, {
    "model.joints.2.maxSpeed": "joints.2.speed",
    "model.joints.0.min": "joints.0.min",
    "model.tool": "tool.xMm",
    name: "name",
    parentRevisionId: undefined,
  });
});

describe("the tool form's units", () => {
  it("TCP offset in mm and deg, mass in kg ⇄ positionM and rpyRad", () => {
    const tool = { name: "Cutter", positionM: [0.02, 0, 0.2], rpyRad: [0, Math.PI / 6, 0], massKg: 2.5, note: "30° pitch" };
    const ui = toolFormValuesOf(tool);
    expect(ui).toMatchObject({ xMm: 20, yMm: 0, zMm: 200, rollDeg: 0, pitchDeg: 30, yawDeg: 0, massKg: 2.5 });
    const back = toolFormCodec.decode(ui);
    closeTo(back.positionM, tool.positionM, 12);
    closeTo(back.rpyRad, tool.rpyRad, 12);
    expect(back.massKg).toBe(2.5);
  });

  it("refuses a negative mass and a missing name on their fields", () => {
    const result = toolFormCodec.safeDecode({ ...toolFormValuesOf(null), massKg: -1 });
    expect(refusedPaths(result)).toEqual(expect.arrayContaining(["massKg", "name"]));
    expect(toolFieldOfPath("rpyRad.1")).toBe("pitchDeg");
  });
});
