import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { versionDetailResponseSchema, type Arm } from "@jogwright/shared";
import { call, createMailHarness, signIn, type Harness } from "../../test/harness.ts";
import { approvedProfile, compliantParams, createProfile, freshTeam, retireTeam, sixAxisArm, type Team } from "../../test/profiles-fixture.ts";
import type { FakeSmtp } from "../../mail/fake-smtp.ts";

/**
 * The review workflow pass (issue 13, items 4 and 5): one submission of a profile in the queue (a newer
 * one withdraws the older), the author's withdrawal, approving an older version only as an explicit
 * rollback, and a new version started from a chosen base.
 */
let h: Harness & { smtp: FakeSmtp };
let team: Team;
let arm: Arm;
let auditor: string;
beforeAll(async () => {
  h = await createMailHarness({ SIGN_IN_MAX_FAILURES: "1000" });
  team = await freshTeam(h);
  arm = await sixAxisArm(h);
  auditor = await signIn(h, "sigrid");
  // No built-in trial runs at each submission (evidence has its own tests: reviews/evidence.test.ts).
  const current = (await call(h, "get", "/api/ceilings", team.officer.cookie)).body;
  await call(h, "put", "/api/ceilings", team.officer.cookie).send({ revision: current.revision, ceilings: { ...current.ceilings, evidenceRequired: "none" }, note: "no evidence, for speed" }).expect(200);
});
afterAll(async () => {
  await retireTeam(h, team);
  await h.close();
});

function saveFrom(profileId: number, parentVersionId: number, watchdogMs: number, latestVersionId?: number, cookie = team.engineer.cookie) {
  return call(h, "post", `/api/profiles/${profileId}/versions`, cookie).send({ parentVersionId, latestVersionId, params: { ...compliantParams(arm), watchdogMs }, note: `watchdog ${watchdogMs}` });
}
const detail = async (id: number) => versionDetailResponseSchema.parse((await call(h, "get", `/api/versions/${id}`, team.officer.cookie).expect(200)).body).version;
const queueIds = async () => (await call(h, "get", "/api/reviews", team.officer.cookie).expect(200)).body.versions.map((v: { id: number }) => v.id) as number[];
async function auditActions(versionId: number): Promise<{ action: string; summary: string }[]> {
  const res = await call(h, "get", "/api/audit?entity=version&pageSize=200", auditor).expect(200);
  return res.body.entries.filter((e: { entityId: string }) => e.entityId === String(versionId));
}

describe("one submission of a profile in the queue", () => {
  it("submitting a newer version withdraws the older pending submission, with a note naming the newer one", async () => {
    const profile = await createProfile(h, team, arm);
    const v1 = profile.latestVersion;
    await call(h, "post", `/api/versions/${v1.id}/submit`, team.engineer.cookie).expect(200);
    const v2 = (await saveFrom(profile.id, v1.id, 280).expect(201)).body.version;
    await call(h, "post", `/api/versions/${v2.id}/submit`, team.engineer2.cookie).expect(200);

    const older = await detail(v1.id);
    expect(older.state).toBe("withdrawn");
    expect(older.decisionComment).toBe(`withdrawn: v2 was submitted in its place by ${team.engineer2.displayName}`);
    expect(older.decidedById).toBe(team.engineer2.id);
    const queue = await queueIds();
    expect(queue).toContain(v2.id);
    expect(queue).not.toContain(v1.id);
    expect((await auditActions(v1.id)).map((e) => e.action)).toContain("withdraw");
    // A withdrawn version stays in the profile's history and cannot be approved.
    const history = (await call(h, "get", `/api/profiles/${profile.id}`, team.engineer.cookie).expect(200)).body.versions;
    expect(history.map((v: { id: number; state: string }) => [v.id, v.state])).toEqual([
      [v2.id, "submitted"],
      [v1.id, "withdrawn"],
    ]);
    const approve = await call(h, "post", `/api/versions/${v1.id}/approve`, team.officer.cookie).send({ comment: "the older one", paramsSha256: v1.paramsSha256 });
    expect(approve.status).toBe(409);
    expect(approve.body.error.code).toBe("invalid_transition");
  });
});

describe("withdrawing a submission", () => {
  it("the author withdraws their submission with a note: it leaves the queue and the history shows the note", async () => {
    const profile = await createProfile(h, team, arm);
    const v = profile.latestVersion;
    await call(h, "post", `/api/versions/${v.id}/submit`, team.engineer.cookie).expect(200);
    expect(await queueIds()).toContain(v.id);
    const res = await call(h, "post", `/api/versions/${v.id}/withdraw`, team.engineer.cookie).send({ note: "found a better damping value" }).expect(200);
    expect(res.body.version).toMatchObject({ state: "withdrawn", decisionComment: "found a better damping value", decidedById: team.engineer.id });
    expect(await queueIds()).not.toContain(v.id);
    const audit = await auditActions(v.id);
    expect(audit.find((e) => e.action === "withdraw")?.summary).toContain("found a better damping value");
  });

  it("nobody but the author may withdraw it, and only a submitted version can be withdrawn", async () => {
    const profile = await createProfile(h, team, arm);
    const v = profile.latestVersion;
    const draft = await call(h, "post", `/api/versions/${v.id}/withdraw`, team.engineer.cookie).send({});
    expect(draft.status).toBe(409);
    expect(draft.body.error.code).toBe("invalid_transition");
    await call(h, "post", `/api/versions/${v.id}/submit`, team.engineer.cookie).expect(200);
    const other = await call(h, "post", `/api/versions/${v.id}/withdraw`, team.engineer2.cookie).send({ note: "not mine" });
    expect(other.status).toBe(403);
    expect(other.body.error.message).toContain(team.engineer.displayName);
    await call(h, "post", `/api/versions/${v.id}/withdraw`, team.officer.cookie).send({}).expect(403);
    await call(h, "post", `/api/versions/${v.id}/withdraw`, team.operator.cookie).send({}).expect(403);
    expect((await detail(v.id)).state).toBe("submitted");
  });
});

describe("approving an older version is a rollback", () => {
  it("is refused without an explicit rollback, and with it the newer approved version is superseded and the audit names a rollback", async () => {
    const { profile, version: v1 } = await approvedProfile(h, team, arm);
    const v2 = (await saveFrom(profile.id, v1.id, 280).expect(201)).body.version;
    const v3 = (await saveFrom(profile.id, v2.id, 270).expect(201)).body.version;
    await call(h, "post", `/api/versions/${v3.id}/submit`, team.engineer.cookie).expect(200);
    await call(h, "post", `/api/versions/${v3.id}/approve`, team.officer.cookie).send({ comment: "v3 fine", paramsSha256: v3.paramsSha256 }).expect(200);
    await call(h, "post", `/api/versions/${v2.id}/submit`, team.engineer.cookie).expect(200);

    const plain = await call(h, "post", `/api/versions/${v2.id}/approve`, team.officer.cookie).send({ comment: "v2 instead", paramsSha256: v2.paramsSha256 });
    expect(plain.status).toBe(409);
    expect(plain.body.error.code).toBe("rollback_unconfirmed");
    expect(plain.body.error.message).toContain("v3");
    expect((await detail(v2.id)).state).toBe("submitted");
    expect((await call(h, "get", `/api/profiles/${profile.id}`, team.operator.cookie)).body.profile.driveableVersionId).toBe(v3.id);

    await call(h, "post", `/api/versions/${v2.id}/approve`, team.officer.cookie).send({ comment: "v3 judders, back to v2", paramsSha256: v2.paramsSha256, rollback: true }).expect(200);
    expect((await detail(v3.id)).state).toBe("superseded");
    expect((await call(h, "get", `/api/profiles/${profile.id}`, team.operator.cookie)).body.profile.driveableVersionId).toBe(v2.id);
    const audit = await auditActions(v2.id);
    const rollback = audit.find((e) => e.action === "rollback");
    expect(rollback?.summary).toMatch(/back from v3/);
    expect(audit.map((e) => e.action)).not.toContain("approve");
  });

  it("approving a newer version needs no rollback flag", async () => {
    const { profile, version: v1 } = await approvedProfile(h, team, arm);
    const v2 = (await saveFrom(profile.id, v1.id, 280).expect(201)).body.version;
    await call(h, "post", `/api/versions/${v2.id}/submit`, team.engineer.cookie).expect(200);
    await call(h, "post", `/api/versions/${v2.id}/approve`, team.officer.cookie).send({ comment: "newer", paramsSha256: v2.paramsSha256 }).expect(200);
    expect((await auditActions(v2.id)).map((e) => e.action)).toContain("approve");
  });
});

describe("a new version from a chosen base", () => {
  it("starts from any version of the profile (e.g. the approved one, not a newer rejected one), the stale check following the latest version seen", async () => {
    const { profile, version: v1 } = await approvedProfile(h, team, arm, { ...compliantParams(arm), watchdogMs: 290 });
    const v2 = (await saveFrom(profile.id, v1.id, 150).expect(201)).body.version;
    await call(h, "post", `/api/versions/${v2.id}/submit`, team.engineer.cookie).expect(200);
    await call(h, "post", `/api/versions/${v2.id}/reject`, team.officer.cookie).send({ reason: "watchdog too short" }).expect(200);

    const v3 = await saveFrom(profile.id, v1.id, 285, v2.id);
    expect(v3.status).toBe(201);
    expect(v3.body.version).toMatchObject({ number: 3, parentVersionId: v1.id });
    const saved = (await auditActions(v3.body.version.id)).find((e) => e.action === "save");
    expect(saved?.summary).toContain("from v1");

    // The latest the editor saw is no longer the latest: 409, nothing saved.
    const stale = await saveFrom(profile.id, v1.id, 284, v2.id);
    expect(stale.status).toBe(409);
    expect(stale.body.error.code).toBe("stale_parent");
    // Without latestVersionId the parent must still be the latest (the former rule).
    expect((await saveFrom(profile.id, v1.id, 284)).status).toBe(409);
    // A base from another profile is refused on the field.
    const other = await createProfile(h, team, arm);
    const foreign = await saveFrom(profile.id, other.latestVersion.id, 284, v3.body.version.id);
    expect(foreign.status).toBe(400);
    expect(foreign.body.error.issues[0].path).toBe("parentVersionId");
  });
});
