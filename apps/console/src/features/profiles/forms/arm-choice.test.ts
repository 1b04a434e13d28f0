import { describe, expect, it } from "vitest";
import { DEFAULT_CEILINGS, defaultProfileParams, type Arm, type ArmDetail, type ArmRevision, type ProfileParams, type ProfileVersion, type Tool } from "@jogwright/shared";
import { armChoiceFields, defaultToolOn, describeArmMove, draftSubmitBlockers, fitParamsToJoints, pickableTools } from "./arm-choice.ts";
import { armChoiceOf, movesArm, versionArmText } from "../../../lib/version-arm.ts";

const tool = (id: number, revisionId: number, name: string, retiredAt: string | null = null): Tool => ({
  id, armRevisionId: revisionId, name, positionM: [0, 0, 0.16], rpyRad: [0, 0, 0], massKg: 0, note: "", retiredAt, createdAt: "",
});
const revision = (id: number, n: number, tools: Tool[]): ArmRevision => ({
  id, armId: 7, revision: n, model: { convention: "standard", joints: [] }, readyPose: [], note: "", createdBy: null, createdByName: null, createdAt: "", versionCount: 0, tools,
});
const rev1 = revision(11, 1, [tool(31, 11, "Flange tool"), tool(32, 11, "Old probe", "2026-12-01T00:00:00.000Z")]);
const rev2 = revision(12, 2, [tool(41, 12, "Flange tool"), tool(42, 12, "Long gripper")]);
const onRev1 = { revisionId: 11, toolId: 31 };

describe("the arm revision and tool a new version is saved on", () => {
  it("starts as the base version's, and a save names neither field while it stays so (the server keeps the parent's)", () => {
    const base = armChoiceOf({ armRevisionId: 11, armRevision: 1, toolId: 31, toolName: "Flange tool" });
    expect(base).toEqual(onRev1);
    expect(armChoiceFields(base, { ...onRev1 })).toEqual({});
    expect(armChoiceFields(base, { revisionId: 12, toolId: 42 })).toEqual({ armRevisionId: 12, toolId: 42 });
    // Another tool on the same revision is a move too; "no tool record" is sent as null, not left out.
    expect(armChoiceFields(base, { revisionId: 11, toolId: null })).toEqual({ armRevisionId: 11, toolId: null });
  });

  it("is not known for a version the API did not name it on", () => {
    expect(armChoiceOf({})).toBeNull();
    expect(armChoiceOf({ armRevisionId: null, toolId: null })).toBeNull();
    expect(versionArmText({})).toBeNull();
  });

  it("offers the tools in service, and a retired one only as the tool the base version already names", () => {
    expect(pickableTools(rev1, null).map((t) => t.name)).toEqual(["Flange tool"]);
    expect(pickableTools(rev1, { revisionId: 11, toolId: 32 }).map((t) => t.name)).toEqual(["Flange tool", "Old probe"]);
    expect(pickableTools(undefined, null)).toEqual([]);
  });

  it("picking a revision picks the base's tool on the base's revision, else that revision's first tool in service", () => {
    expect(defaultToolOn(rev2, onRev1)).toBe(41);
    expect(defaultToolOn(rev1, { revisionId: 11, toolId: 32 })).toBe(32);
    expect(defaultToolOn(rev1, null)).toBe(31);
    expect(defaultToolOn(revision(13, 3, [tool(51, 13, "Gone", "2026-12-01T00:00:00.000Z")]), null)).toBeNull();
  });
});

describe("how the pages name what a version drives", () => {
  it("says which revision and tool the next version moves to, and that it is reviewed again", () => {
    expect(describeArmMove(3, { number: 2, revision: 1, toolName: "Flange tool" }, { revision: 2, toolName: "Long gripper" })).toBe(
      'v3 will drive revision 2 with tool "Long gripper" (v2 drives revision 1 with tool "Flange tool"); it goes through review again like any new version.',
    );
    expect(describeArmMove(2, null, { revision: 1, toolName: null })).toBe(
      "v2 will drive revision 1 with the model's own tool transform; it goes through review again like any new version.",
    );
  });

  it("names each version's revision and tool in the list, and a version that moved from its parent's", () => {
    const v1 = { armRevisionId: 11, armRevision: 1, toolId: 31, toolName: "Flange tool" };
    const v2 = { armRevisionId: 12, armRevision: 2, toolId: 42, toolName: "Long gripper" };
    expect(versionArmText(v1)).toBe("Revision 1 · Flange tool");
    expect(versionArmText({ ...v2, toolId: null, toolName: null })).toBe("Revision 2 · the model's own tool");
    expect(movesArm(v2, v1)).toBe(true);
    expect(movesArm({ ...v1 }, v1)).toBe(false);
    expect(movesArm(v2, {})).toBe(false);
  });
});

describe("parameters on another revision's joints", () => {
  const joint = (maxSpeed: number) => ({ type: "revolute" as const, a: 0, alpha: 0, d: 0, theta: 0, maxSpeed });
  const armWith = (speeds: number[]): Arm => ({ id: 7, name: "A", description: "", model: { convention: "standard", joints: speeds.map(joint) }, readyPose: [], createdAt: "", updatedAt: "" });
  const params = { jointRateCapsRadPerS: [0.5, 0.6, 0.7] } as ProfileParams;

  it("are the same object when the joint count is the same", () => {
    expect(fitParamsToJoints(params, armWith([2, 2, 2]))).toBe(params);
  });

  it("keep the caps of the joints both have; an added joint gets half its rated speed, a removed one's cap goes", () => {
    expect(fitParamsToJoints(params, armWith([2, 2, 2, 3])).jointRateCapsRadPerS).toEqual([0.5, 0.6, 0.7, 1.5]);
    expect(fitParamsToJoints(params, armWith([2, 2])).jointRateCapsRadPerS).toEqual([0.5, 0.6]);
  });
});

describe("which drafts the profile page says cannot be submitted", () => {
  // One revolute joint rated 2 rad/s on revision 1, 4 rad/s on revision 2 (the arm as listed: revision 2).
  const joint = (maxSpeed: number) => ({ type: "revolute" as const, a: 0, alpha: 0, d: 0.1, theta: 0, min: -3, max: 3, maxSpeed });
  const model = (maxSpeed: number) => ({ convention: "standard" as const, joints: [joint(maxSpeed)] });
  const r1: ArmRevision = { ...revision(11, 1, []), model: model(2) };
  const r2: ArmRevision = { ...revision(12, 2, []), model: model(4) };
  const arm = { id: 7, slug: "one-joint", name: "One joint", model: model(4), readyPose: [0] } as unknown as Arm;
  const detail = { arm: { ...arm, latestRevisionId: 12, revision: 2 }, revisions: [r2, r1] } as unknown as ArmDetail;
  // A joint cap of 2.5 rad/s: above 75 % of 2 rad/s (1.5), within 75 % of 4 rad/s (3).
  const params: ProfileParams = { ...defaultProfileParams([2]), jointRateCapsRadPerS: [2.5] };
  const draft = (id: number, armRevisionId: number): ProfileVersion => ({
    id, profileId: 1, number: id, parentVersionId: null, state: "draft", params, paramsSha256: "", note: "", authorId: "a", authorName: "A",
    createdAt: "", submittedAt: null, decidedById: null, decidedByName: null, decidedAt: null, decisionComment: null, exceedsCeilings: false,
    armRevisionId, toolId: null,
  });

  it("checks each draft against the revision it drives, as the server does on submit, not the arm's latest", () => {
    const blockers = draftSubmitBlockers([draft(1, 11), draft(2, 12)], DEFAULT_CEILINGS, arm, detail);
    expect(blockers.get(1)).toMatch(/^Above the site ceilings: joint 1 cap 143\.2 deg\/s exceeds 75 % of its rated 114\.6 deg\/s/);
    expect(blockers.has(2)).toBe(false);
  });

  it("before the revisions load, checks against the arm as listed", () => {
    expect(draftSubmitBlockers([draft(1, 11)], DEFAULT_CEILINGS, arm, undefined).size).toBe(0);
  });
});

