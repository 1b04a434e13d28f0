import { describe, expect, it } from "vitest";
import { toolTransform, type Arm, type ArmDetail, type ArmRevision } from "@jogwright/shared";
import { armAtRevision } from "./arm-revision.ts";

const joint = (a: number) => ({ type: "revolute" as const, a, alpha: 0, d: 0, theta: 0 });
const latestModel = { convention: "standard" as const, joints: [joint(0.45), joint(0.3)] };
const arm: Arm = { id: 7, name: "Test arm", description: "", model: latestModel, readyPose: [0, 0], createdAt: "", updatedAt: "" };
const revision = (id: number, n: number, a: number, tools: ArmRevision["tools"]): ArmRevision => ({
  id, armId: 7, revision: n, model: { convention: "standard", joints: [joint(a), joint(0.3)] }, readyPose: [0.1, 0.2], note: "", createdBy: null, createdByName: null,
  createdAt: "", versionCount: 1, tools,
});
const probe = { id: 31, armRevisionId: 11, name: "Probe", positionM: [0, 0, 0.25], rpyRad: [0, 0.5, 0], massKg: 0, note: "", retiredAt: null, createdAt: "" };
const detail: ArmDetail = { arm: { ...arm, latestRevisionId: 12, revision: 2 }, revisions: [revision(12, 2, 0.45, []), revision(11, 1, 0.4, [probe])] };

describe("the arm a version drives", () => {
  it("is its revision's model with its tool's transform and the revision's ready pose", () => {
    const driven = armAtRevision(arm, detail, 11, 31);
    expect(driven.model.joints[0]!.a).toBe(0.4);
    expect(driven.model.tool).toEqual(toolTransform([0, 0, 0.25], [0, 0.5, 0]));
    expect(driven.readyPose).toEqual([0.1, 0.2]);
  });

  it("is the arm as listed while the detail is not loaded, or the revision is unknown", () => {
    expect(armAtRevision(arm, undefined, 11, 31)).toBe(arm);
    expect(armAtRevision(arm, detail, 99, null)).toBe(arm);
  });
});
