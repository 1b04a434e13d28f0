import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { QueryTypes } from "sequelize";
import { demoArms } from "@jogwright/kinematics";
import { randomUUID } from "node:crypto";
import { armDetailSchema, armUploadPreviewSchema, profileDetailResponseSchema, recordingSchema, toolTransform, versionResponseSchema, type Arm, type ArmModel } from "@jogwright/shared";
import { call, createHarness, type Harness } from "../../test/harness.ts";
import { approveInDatabase, compliantParams, createProfile, sixAxisArm, uniqueName, withTeam, closeWithTeam, type Team } from "../../test/profiles-fixture.ts";
import { loadVersionForDriving } from "../driving/service.ts";
import { insertRecording } from "../recordings/service.ts";
import type { ArmOfVersion } from "./service.ts";

let h: Harness;
let team: Team;
beforeAll(async () => ({ h, team } = await withTeam(createHarness({ SIGN_IN_MAX_FAILURES: "1000" }))));
afterAll(() => closeWithTeam(h, team));

const count = async (table: string) =>
  Number((await h.db.query<{ n: number }>(`SELECT COUNT(*) AS n FROM ${table}`, { type: QueryTypes.SELECT }))[0]!.n);

/** A small three-joint arm (our own), standard DH, with a 100 mm tool along the flange z axis. */
const SMALL_CSV = [
  "# convention: standard",
  "# tool_mm: 1,0,0,0, 0,1,0,0, 0,0,1,100, 0,0,0,1",
  "type,a_mm,alpha_deg,d_mm,theta_deg,min_deg,max_deg,speed_deg_s,accel_deg_s2",
  "revolute,0,90,300,0,-170,170,120,480",
  "revolute,400,0,0,0,-100,100,120,480",
  "revolute,350,0,0,0,-150,150,150,600",
].join("\r\n");

function upload(path: string, text: string, fields: Record<string, string> = {}, cookie = team.engineer.cookie) {
  let r = call(h, "post", path, cookie).attach("file", Buffer.from(text, "utf8"), "anything.txt");
  for (const [k, v] of Object.entries(fields)) r = r.field(k, v);
  return r;
}

describe("the demo arms in the library", () => {
  it("are revision 1 with their tool, and every seeded version names that revision and tool", async () => {
    const arm = await sixAxisArm(h);
    const res = await call(h, "get", `/api/arms/${arm.id}`, team.operator.cookie);
    expect(res.status).toBe(200);
    const detail = armDetailSchema.parse(res.body);
    expect(detail.revisions).toHaveLength(1);
    const [rev] = detail.revisions;
    expect(rev!.revision).toBe(1);
    expect(detail.arm.latestRevisionId).toBe(rev!.id);
    // PRODUCT.md demo scenario: "Tool: 0.16 m along the flange z axis".
    expect(rev!.tools).toHaveLength(1);
    expect(rev!.tools[0]!.positionM).toEqual([0, 0, 0.16]);
    expect(rev!.tools[0]!.rpyRad.map((v) => Math.abs(v))).toEqual([0, 0, 0]);
    expect(rev!.versionCount).toBeGreaterThanOrEqual(2); // the seeded "pack opening" v1 and v2
    const unbound = await h.db.query("SELECT v.id FROM profile_versions v LEFT JOIN version_arms b ON b.version_id = v.id WHERE b.version_id IS NULL", { type: QueryTypes.SELECT });
    expect(unbound).toEqual([]);
  });

  it("drive the same arm model as before revisions existed: the version's arm is the seeded model with its tool", async () => {
    const arm = await sixAxisArm(h);
    const profile = await createProfile(h, team, arm);
    const driven = await loadVersionForDriving(h.db, { ...team.engineer, roles: ["engineer"] } as never, profile.latestVersion.id);
    const demo = demoArms.find((a) => a.slug === "cell-arm-6")!;
    expect(driven.arm.model.joints).toEqual(demo.model.joints);
    driven.arm.model.tool!.forEach((v, k) => expect(v).toBeCloseTo(demo.model.tool![k]!, 15));
  });
});

describe("uploading an arm file", () => {
  it("previews a CSV DH table with σ at the zero pose and saves nothing", async () => {
    const [arms, revisions, audit] = [await count("arms"), await count("arm_revisions"), await count("audit_log")];
    const res = await upload("/api/arms/upload", SMALL_CSV);
    expect(res.status).toBe(200);
    const { preview } = res.body;
    armUploadPreviewSchema.parse(preview);
    expect(preview.format).toBe("csv");
    expect(preview.model.joints[1].a).toBeCloseTo(0.4, 12);
    expect(preview.model.tool[11]).toBeCloseTo(0.1, 12);
    // Three joints: a 6×3 Jacobian, σ_min finite and above zero at q = 0 (joint 2's axis is not singular there).
    expect(preview.sigmaMinAtZero).toBeGreaterThan(0);
    expect([await count("arms"), await count("arm_revisions"), await count("audit_log")]).toEqual([arms, revisions, audit]);
  });

  it("refuses a broken file with 422, each problem with its line and field, and saves nothing even with ?save=1", async () => {
    const [arms, audit] = [await count("arms"), await count("audit_log")];
    const broken = ["# convention: standard", "type,a_mm,alpha_deg,d_mm,theta_deg,min_deg,max_deg", "revolute,100,0,0,0,-90,90", "revolute,abc,0,0,0,90,-90"].join("\n");
    for (const path of ["/api/arms/upload", "/api/arms/upload?save=1"]) {
      const res = await upload(path, broken, { name: uniqueName("Broken arm") });
      expect(res.status).toBe(422);
      expect(res.body.error.code).toBe("validation_failed");
      expect(res.body.error.issues.map((i: { path: string }) => i.path)).toEqual(["line 4: a_mm", "line 4: min_deg"]);
    }
    expect([await count("arms"), await count("audit_log")]).toEqual([arms, audit]);
  });

  it("saves a valid file with ?save=1: the arm, its revision 1 and its tool, audited", async () => {
    const name = uniqueName("Uploaded arm");
    const res = await upload("/api/arms/upload?save=1", SMALL_CSV, { name, description: "three joints" });
    expect(res.status).toBe(201);
    const detail = armDetailSchema.parse(res.body);
    expect(detail.arm.name).toBe(name);
    expect(detail.revisions[0]!.tools[0]!.positionM[2]).toBeCloseTo(0.1, 12);
    const [entry] = await h.db.query<{ action: string; actor_id: string }>("SELECT action, actor_id FROM audit_log WHERE entity = 'arm' AND entity_id = ? ORDER BY id DESC LIMIT 1", {
      type: QueryTypes.SELECT,
      replacements: [String(detail.arm.id)],
    });
    expect(entry).toEqual({ action: "create", actor_id: team.engineer.id });
  });

  it("refuses a file above 1 MB with 413 and an upload without a file with 400", async () => {
    const big = `# convention: standard\n${"#".repeat(1024 * 1024 + 10)}\n`;
    expect((await upload("/api/arms/upload", big)).status).toBe(413);
    expect((await call(h, "post", "/api/arms/upload", team.engineer.cookie).field("name", "x")).status).toBe(400);
  });
});

describe("revisions: an arm that profiles use is never changed in place", () => {
  it("editing makes a new revision; the old versions keep driving the old revision until a new version moves", async () => {
    const created = await call(h, "post", "/api/arms", team.engineer.cookie).send({
      name: uniqueName("Revision arm"),
      model: (await upload("/api/arms/upload", SMALL_CSV)).body.preview.model,
    });
    expect(created.status).toBe(201);
    const arm = created.body.arm as Arm & { latestRevisionId: number };
    const rev1 = arm.latestRevisionId;
    const profile = await createProfile(h, team, arm, compliantParams(arm));
    const v1 = profile.latestVersion.id;
    const engineer = { ...team.engineer, roles: ["engineer"] } as never;

    // Revision 2: joint 2 is 450 mm long, and slower.
    const model2: ArmModel = { ...arm.model, joints: arm.model.joints.map((j, i) => (i === 1 ? { ...j, a: 0.45, maxSpeed: j.maxSpeed! / 2 } : j)) };
    const edit = await call(h, "put", `/api/arms/${arm.id}`, team.engineer.cookie).send({ parentRevisionId: rev1, model: model2, note: "longer upper arm" });
    expect(edit.status).toBe(200);
    const detail = armDetailSchema.parse(edit.body);
    expect(detail.revisions.map((r) => r.revision)).toEqual([2, 1]);
    const rev2 = detail.revisions[0]!;
    expect(rev2.tools.map((t) => t.name)).toEqual(["Flange tool"]); // the tools come along as copies
    expect(rev2).toMatchObject({ note: "longer upper arm", createdBy: team.engineer.id, createdByName: team.engineer.displayName });
    expect(detail.arm.model.joints[1]!.a).toBe(0.45); // the arm as it is today

    // A stale edit is refused and saves nothing.
    const stale = await call(h, "put", `/api/arms/${arm.id}`, team.engineer.cookie).send({ parentRevisionId: rev1, model: model2, note: "again" });
    expect(stale.status).toBe(409);
    expect(stale.body.error.code).toBe("stale_parent");

    // v1 still drives revision 1.
    expect((await loadVersionForDriving(h.db, engineer, v1)).arm.model.joints[1]!.a).toBeCloseTo(0.4, 12);
    // A new version without a revision stays on the parent's revision…
    const v2 = await call(h, "post", `/api/profiles/${profile.id}/versions`, team.engineer.cookie).send({ parentVersionId: v1, params: compliantParams(arm), note: "v2" });
    expect(v2.status).toBe(201);
    expect((await loadVersionForDriving(h.db, engineer, v2.body.version.id)).arm).toMatchObject({ armRevisionId: rev1, revision: 1 });
    // …and moves only by saving a new version that names the new revision (a draft: it goes through review again).
    const v3 = await call(h, "post", `/api/profiles/${profile.id}/versions`, team.engineer.cookie).send({
      parentVersionId: v2.body.version.id,
      params: compliantParams(arm),
      note: "on revision 2",
      armRevisionId: rev2.id,
    });
    expect(v3.status).toBe(201);
    expect(v3.body.version.state).toBe("draft");
    const driven3 = await loadVersionForDriving(h.db, engineer, v3.body.version.id);
    expect(driven3.arm).toMatchObject({ armRevisionId: rev2.id, revision: 2 });
    expect(driven3.arm.model.joints[1]!.a).toBeCloseTo(0.45, 12);
    expect(driven3.arm.model.tool![11]).toBeCloseTo(0.1, 12);
    expect((await loadVersionForDriving(h.db, engineer, v1)).arm.model.joints[1]!.a).toBeCloseTo(0.4, 12);

    // Another arm's revision is refused on the field.
    const other = await sixAxisArm(h);
    const otherRev = armDetailSchema.parse((await call(h, "get", `/api/arms/${other.id}`, team.engineer.cookie)).body).arm.latestRevisionId;
    const wrong = await call(h, "post", `/api/profiles/${profile.id}/versions`, team.engineer.cookie).send({
      parentVersionId: v3.body.version.id,
      params: compliantParams(arm),
      armRevisionId: otherRev,
    });
    expect(wrong.status).toBe(400);
    expect(wrong.body.error.issues[0].path).toBe("armRevisionId");

    // The database refuses changing a revision or a version's binding, whoever asks.
    await expect(h.db.query("UPDATE arm_revisions SET note = 'x' WHERE id = ?", { replacements: [rev1] })).rejects.toThrow(/never changed/);
    await expect(h.db.query("UPDATE version_arms SET arm_revision_id = ? WHERE version_id = ?", { replacements: [rev2.id, v1] })).rejects.toThrow(/never changed/);
  });

  it("a base or tool that is not a rigid transform is refused on the field", async () => {
    const model = (await upload("/api/arms/upload", SMALL_CSV)).body.preview.model;
    const res = await call(h, "post", "/api/arms", team.engineer.cookie).send({ name: uniqueName("Sheared"), model: { ...model, tool: [1, 0.2, 0, 0, 0, 1, 0, 0, 0, 0, 1, 0.1, 0, 0, 0, 1] } });
    expect(res.status).toBe(400);
    expect(res.body.error.issues[0].path).toBe("model.tool");
  });
});

describe("the API names the arm revision and tool each version drives", () => {
  it("in the profile's version list, in the save's answer, in the review read and in a recording of each version", async () => {
    const created = await call(h, "post", "/api/arms", team.engineer.cookie).send({ name: uniqueName("Named arm"), model: (await upload("/api/arms/upload", SMALL_CSV)).body.preview.model });
    const arm = created.body.arm as Arm & { latestRevisionId: number };
    const rev1 = arm.latestRevisionId;
    const profile = await createProfile(h, team, arm, compliantParams(arm));
    const v1 = profile.latestVersion.id;
    const edit = await call(h, "put", `/api/arms/${arm.id}`, team.engineer.cookie).send({ parentRevisionId: rev1, model: arm.model, note: "revision 2" });
    const rev2 = armDetailSchema.parse(edit.body).revisions[0]!;
    const gripper = await call(h, "post", `/api/arms/${arm.id}/revisions/${rev2.id}/tools`, team.engineer.cookie).send({ name: "Long gripper", positionM: [0, 0, 0.3], rpyRad: [0, 0, 0], massKg: 1.2 });
    expect(gripper.status).toBe(201);

    const saved = await call(h, "post", `/api/profiles/${profile.id}/versions`, team.engineer.cookie).send({
      parentVersionId: v1,
      params: compliantParams(arm),
      note: "onto revision 2",
      armRevisionId: rev2.id,
      toolId: gripper.body.tool.id,
    });
    expect(saved.status).toBe(201);
    const v2 = versionResponseSchema.parse(saved.body).version;
    expect(v2).toMatchObject({ armRevisionId: rev2.id, armRevision: 2, toolId: gripper.body.tool.id, toolName: "Long gripper" });

    // Read by the profile's operator too (the version list is the same for everyone who may see it).
    const read = await call(h, "get", `/api/profiles/${profile.id}`, team.operator.cookie);
    expect(read.status).toBe(200);
    const { versions } = profileDetailResponseSchema.parse(read.body);
    expect(versions.map((v) => [v.number, v.armRevisionId, v.armRevision, v.toolName])).toEqual([
      [2, rev2.id, 2, "Long gripper"],
      [1, rev1, 1, "Flange tool"],
    ]);

    // The review read names both: the version's, and the approved version's it would replace.
    await approveInDatabase(h, v1, team.officer.id);
    const review = await call(h, "get", `/api/versions/${v2.id}`, team.officer.cookie);
    expect(review.status).toBe(200);
    expect(review.body.version).toMatchObject({ armRevisionId: rev2.id, armRevision: 2, toolName: "Long gripper" });
    expect(review.body.approvedVersion).toMatchObject({ id: v1, armRevisionId: rev1, armRevision: 1, toolName: "Flange tool" });

    // A recording names the revision and tool of the version driven, not the arm's latest.
    for (const [versionId, want] of [[v1, { armRevisionId: rev1, armRevision: 1, toolName: "Flange tool" }], [v2.id, { armRevisionId: rev2.id, armRevision: 2, toolName: "Long gripper" }]] as const) {
      const recordingId = await insertRecording(h.db, { sessionId: randomUUID(), driverId: team.operator.id, armId: arm.id, profileId: profile.id, versionId, startedAt: new Date() });
      const res = await call(h, "get", `/api/recordings/${recordingId}`, team.engineer.cookie);
      expect(res.status).toBe(200);
      expect(recordingSchema.parse(res.body.recording)).toMatchObject({ versionId, ...want });
    }
  });
});

describe("a new profile names its arm revision and tool", () => {
  it("v1 is made on the revision and tool asked for; a revision of another arm or a retired tool is refused on the field", async () => {
    const created = await call(h, "post", "/api/arms", team.engineer.cookie).send({ name: uniqueName("Profile arm"), model: (await upload("/api/arms/upload", SMALL_CSV)).body.preview.model });
    const arm = created.body.arm as Arm & { latestRevisionId: number };
    const rev1 = arm.latestRevisionId;
    const probe = await call(h, "post", `/api/arms/${arm.id}/revisions/${rev1}/tools`, team.engineer.cookie).send({ name: "Probe", positionM: [0, 0, 0.25], rpyRad: [0, 0, 0], massKg: 0.4 });
    expect(probe.status).toBe(201);
    const edit = await call(h, "put", `/api/arms/${arm.id}`, team.engineer.cookie).send({ parentRevisionId: rev1, model: arm.model, note: "revision 2, same model" });
    expect(edit.status).toBe(200);
    const engineer = { ...team.engineer, roles: ["engineer"] } as never;
    const base = { operatorId: team.operator.id, armId: arm.id, params: compliantParams(arm), note: "v1" };

    // Revision 1 with its "Probe" tool, although revision 2 is the latest.
    const onRev1 = await call(h, "post", "/api/profiles", team.engineer.cookie).send({ ...base, name: uniqueName("On rev 1"), armRevisionId: rev1, toolId: probe.body.tool.id });
    expect(onRev1.status).toBe(201);
    const driven = await loadVersionForDriving(h.db, engineer, onRev1.body.profile.latestVersion.id);
    expect(driven.arm).toMatchObject({ armRevisionId: rev1, revision: 1, tool: { id: probe.body.tool.id, name: "Probe" } });
    expect(driven.arm.model.tool![11]).toBeCloseTo(0.25, 12);

    // Without a revision: the latest, with its first tool in service (the copied "Flange tool").
    const onLatest = await call(h, "post", "/api/profiles", team.engineer.cookie).send({ ...base, name: uniqueName("On latest") });
    expect(onLatest.status).toBe(201);
    expect((await loadVersionForDriving(h.db, engineer, onLatest.body.profile.latestVersion.id)).arm).toMatchObject({ revision: 2, tool: { name: "Flange tool" } });

    const [profiles, versions] = [await count("profiles"), await count("profile_versions")];
    const otherRev = armDetailSchema.parse((await call(h, "get", `/api/arms/${(await sixAxisArm(h)).id}`, team.engineer.cookie)).body).arm.latestRevisionId;
    const wrongRevision = await call(h, "post", "/api/profiles", team.engineer.cookie).send({ ...base, name: uniqueName("Wrong"), armRevisionId: otherRev });
    expect(wrongRevision.status).toBe(400);
    expect(wrongRevision.body.error.issues[0].path).toBe("armRevisionId");
    await call(h, "post", `/api/arms/${arm.id}/tools/${probe.body.tool.id}/retire`, team.engineer.cookie).expect(200);
    const retired = await call(h, "post", "/api/profiles", team.engineer.cookie).send({ ...base, name: uniqueName("Retired"), armRevisionId: rev1, toolId: probe.body.tool.id });
    expect(retired.status).toBe(400);
    expect(retired.body.error.issues[0].path).toBe("toolId");
    expect([await count("profiles"), await count("profile_versions")]).toEqual([profiles, versions]);
  });
});

describe("tools", () => {
  it("are added to a revision, changed while no version names them, retired, and a profile names its tool", async () => {
    const created = await call(h, "post", "/api/arms", team.engineer.cookie).send({ name: uniqueName("Tool arm"), model: (await upload("/api/arms/upload", SMALL_CSV)).body.preview.model });
    const arm = created.body.arm as Arm & { latestRevisionId: number };
    const rev = arm.latestRevisionId;
    const add = await call(h, "post", `/api/arms/${arm.id}/revisions/${rev}/tools`, team.engineer.cookie).send({
      name: "Angled cutter",
      positionM: [0.02, 0, 0.2],
      rpyRad: [0, Math.PI / 6, 0],
      massKg: 2.5,
      note: "30° pitch",
    });
    expect(add.status).toBe(201);
    const toolId = add.body.tool.id as number;
    const dup = await call(h, "post", `/api/arms/${arm.id}/revisions/${rev}/tools`, team.engineer.cookie).send({ name: "Angled cutter", positionM: [0, 0, 0], rpyRad: [0, 0, 0], massKg: 0 });
    expect(dup.status).toBe(409);
    const change = await call(h, "put", `/api/arms/${arm.id}/tools/${toolId}`, team.engineer.cookie).send({ name: "Angled cutter", positionM: [0.02, 0, 0.21], rpyRad: [0, Math.PI / 6, 0], massKg: 2.6 });
    expect(change.status).toBe(200);
    expect(change.body.tool.massKg).toBe(2.6);

    const profile = await createProfile(h, team, arm, compliantParams(arm));
    const v2 = await call(h, "post", `/api/profiles/${profile.id}/versions`, team.engineer.cookie).send({ parentVersionId: profile.latestVersion.id, params: compliantParams(arm), toolId });
    expect(v2.status).toBe(201);
    const driven = await loadVersionForDriving(h.db, { ...team.engineer, roles: ["engineer"] } as never, v2.body.version.id);
    expect((driven.arm as ArmOfVersion).tool?.id).toBe(toolId);
    const want = toolTransform([0.02, 0, 0.21], [0, Math.PI / 6, 0]);
    driven.arm.model.tool!.forEach((v, k) => expect(v).toBeCloseTo(want[k]!, 15));

    // Named by a version: never changed under it; retiring keeps it for that version.
    const refused = await call(h, "put", `/api/arms/${arm.id}/tools/${toolId}`, team.engineer.cookie).send({ name: "Angled cutter", positionM: [0, 0, 0.3], rpyRad: [0, 0, 0], massKg: 1 });
    expect(refused.status).toBe(409);
    const retire = await call(h, "post", `/api/arms/${arm.id}/tools/${toolId}/retire`, team.engineer.cookie);
    expect(retire.status).toBe(200);
    expect(retire.body.tool.retiredAt).not.toBeNull();
    expect(((await loadVersionForDriving(h.db, { ...team.engineer, roles: ["engineer"] } as never, v2.body.version.id)).arm as ArmOfVersion).tool?.id).toBe(toolId);
    const onRetired = await call(h, "post", `/api/profiles/${profile.id}/versions`, team.engineer.cookie).send({ parentVersionId: v2.body.version.id, params: compliantParams(arm), toolId });
    expect(onRetired.status).toBe(400);
    expect(onRetired.body.error.issues[0].path).toBe("toolId");
    // A tool is reached only through its own arm.
    expect((await call(h, "post", `/api/arms/${(await sixAxisArm(h)).id}/tools/${toolId}/retire`, team.engineer.cookie)).status).toBe(404);
  });
});
