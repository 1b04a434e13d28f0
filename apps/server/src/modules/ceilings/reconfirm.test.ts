import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { QueryTypes, type Sequelize } from "sequelize";
import { flaggedVersionsResponseSchema, updateCeilingsResponseSchema, versionDetailResponseSchema, type Arm, type Ceilings } from "@jogwright/shared";
import { call, createMailHarness, freshUser, signIn, type Harness } from "../../test/harness.ts";
import { approvedProfile, approveInDatabase, compliantParams, createProfile, freshTeam, retireTeam, sixAxisArm, type Team } from "../../test/profiles-fixture.ts";
import { createOwnerDb } from "../../test/owner-db.ts";
import type { FakeSmtp } from "../../mail/fake-smtp.ts";

/**
 * Flags and re-confirmation (issue 13, items 3 and 8): a lowered ceiling flags approved versions above
 * it and mails engineers, operators and safety officers; raising it again leaves the flag, and a safety
 * officer re-confirms a flagged version that complies with the ceilings in force now (with a comment,
 * audited, mailed). The flag history keeps both. The database still refuses clearing a flag by UPDATE.
 */
let h: Harness & { smtp: FakeSmtp };
let owner: Sequelize;
let team: Team;
let arm: Arm;
let original: Ceilings;
let auditor: string;
beforeAll(async () => {
  h = await createMailHarness({ SIGN_IN_MAX_FAILURES: "1000" });
  owner = createOwnerDb();
  team = await freshTeam(h);
  arm = await sixAxisArm(h);
  // No built-in trial runs at each submission (evidence has its own tests: reviews/evidence.test.ts).
  original = { ...(await call(h, "get", "/api/ceilings", team.officer.cookie)).body.ceilings, evidenceRequired: "none" };
  await setCeilings(original, "no evidence, for speed");
  auditor = await signIn(h, "sigrid");
});
afterAll(async () => {
  await retireTeam(h, team);
  await owner?.close();
  await h.close();
});

async function setCeilings(ceilings: Ceilings, note = "test") {
  const current = (await call(h, "get", "/api/ceilings", team.officer.cookie)).body;
  const res = await call(h, "put", "/api/ceilings", team.officer.cookie).send({ revision: current.revision, ceilings, note });
  if (res.status !== 200) throw new Error(`put ceilings: ${res.status} ${JSON.stringify(res.body)}`);
  return updateCeilingsResponseSchema.parse(res.body);
}
const detailOf = async (id: number) => versionDetailResponseSchema.parse((await call(h, "get", `/api/versions/${id}`, team.officer.cookie).expect(200)).body);
const reconfirm = (id: number, comment: string, cookie = team.officer2.cookie) => call(h, "post", `/api/versions/${id}/reconfirm`, cookie).send({ comment });

/** An approved version with a 295 ms watchdog (within the default 300 ms), flagged by a 290 ms ceiling. */
async function flaggedVersion() {
  const approved = await approvedProfile(h, team, arm, { ...compliantParams(arm), watchdogMs: 295 });
  await h.ctx.mailer.settled();
  const mailsBefore = h.smtp.messages.length;
  const lowered = await setCeilings({ ...original, watchdogMaxMs: 290 }, "shorter watchdog for the new cell door");
  return { ...approved, lowered, mailsBefore };
}

describe("a lowered ceiling", () => {
  it("mails the engineers, the affected operator and the safety officers, naming versions as people know them", async () => {
    const { profile, version, lowered, mailsBefore } = await flaggedVersion();
    try {
      expect(lowered.flaggedVersionIds).toContain(version.id);
      expect(lowered.flaggedVersions.find((f) => f.versionId === version.id)).toMatchObject({ label: `${profile.name} v1`, compliesNow: false });
      await h.ctx.mailer.settled();
      const mail = h.smtp.messages.slice(mailsBefore).find((m) => m.subject.includes("Site ceilings lowered") && m.text.includes(`(id ${version.id})`));
      expect(mail).toBeDefined();
      expect(mail!.to).toEqual(expect.arrayContaining([team.engineer.email, team.operator.email, team.officer.email, team.officer2.email]));
      expect(mail!.text).toContain(`${profile.name} v1, operator ${team.operator.displayName}`);
    } finally {
      await setCeilings(original, "back to the defaults");
    }
  });
});

describe("re-confirming a flagged version under the current ceilings", () => {
  it("is refused (409) while the version still exceeds the ceilings in force; nothing changes", async () => {
    const { version } = await flaggedVersion();
    try {
      const res = await reconfirm(version.id, "looks fine to me");
      expect(res.status).toBe(409);
      expect(res.body.error.code).toBe("ceiling_exceeded");
      expect(res.body.error.message).toMatch(/cannot be re-confirmed: it is still above site ceilings revision \d+ — watchdog 295 ms/);
      expect(res.body.error.issues.map((i: { path: string }) => i.path)).toEqual(["watchdogMs"]);
      const detail = await detailOf(version.id);
      expect(detail.version.exceedsCeilings).toBe(true);
      expect(detail.ceilingEvents.map((e) => e.kind)).toEqual(["flag"]);
    } finally {
      await setCeilings(original, "back to the defaults");
    }
  });

  it("once it complies again, a safety officer re-confirms it with a comment: driveable again, audited, mailed, and the flag history keeps the flag", async () => {
    const { profile, version } = await flaggedVersion();
    const raised = await setCeilings(original, "the new door was not fitted after all");
    // Raising the ceilings alone does not clear the flag.
    expect(raised.flaggedVersions.find((f) => f.versionId === version.id)).toMatchObject({ exceedsCeilings: true, compliesNow: true });
    expect((await call(h, "get", `/api/profiles/${profile.id}`, team.operator.cookie)).body.profile.driveableVersionId).toBeNull();
    const listed = flaggedVersionsResponseSchema.parse((await call(h, "get", "/api/ceilings/flagged", team.engineer.cookie).expect(200)).body);
    expect(listed.versions.find((f) => f.versionId === version.id)?.label).toBe(`${profile.name} v1`);

    // A comment is required; the author of the version may not re-confirm it.
    expect((await reconfirm(version.id, "")).status).toBe(400);
    await h.ctx.mailer.settled();
    const mailsBefore = h.smtp.messages.length;

    const res = await reconfirm(version.id, "door plan withdrawn; 300 ms watchdog stands");
    expect(res.status).toBe(200);
    expect(res.body.version).toMatchObject({ id: version.id, state: "approved", exceedsCeilings: false });
    expect((await call(h, "get", `/api/profiles/${profile.id}`, team.operator.cookie)).body.profile.driveableVersionId).toBe(version.id);

    const detail = await detailOf(version.id);
    expect(detail.ceilingEvents.map((e) => [e.kind, e.actorId])).toEqual([
      ["flag", team.officer.id],
      ["reconfirm", team.officer2.id],
    ]);
    expect(detail.ceilingEvents[1]!.comment).toBe("door plan withdrawn; 300 ms watchdog stands");
    expect((await call(h, "get", "/api/ceilings/flagged", team.officer.cookie)).body.versions.map((f: { versionId: number }) => f.versionId)).not.toContain(version.id);

    const audit = (await call(h, "get", `/api/audit?entity=version&pageSize=200`, auditor)).body.entries.filter((e: { entityId: string }) => e.entityId === String(version.id));
    const entry = audit.find((e: { action: string }) => e.action === "reconfirm");
    expect(entry).toMatchObject({ actorId: team.officer2.id, summary: expect.stringContaining("door plan withdrawn") });
    expect(audit.map((e: { action: string }) => e.action)).toContain("flag");

    await h.ctx.mailer.settled();
    const mail = h.smtp.messages.slice(mailsBefore).find((m) => m.subject.includes("Re-confirmed"));
    expect(mail?.subject).toContain(`${profile.name} v1`);
    expect(mail!.to).toEqual(expect.arrayContaining([team.engineer.email, team.operator.email]));

    // Nothing left to re-confirm; a later lowering flags it again, and the history grows.
    expect((await reconfirm(version.id, "again")).body.error.code).toBe("invalid_transition");
    try {
      const again = await setCeilings({ ...original, watchdogMaxMs: 290 });
      expect(again.flaggedVersionIds).toContain(version.id);
      expect((await detailOf(version.id)).ceilingEvents.map((e) => e.kind)).toEqual(["flag", "reconfirm", "flag"]);
    } finally {
      await setCeilings(original);
    }
  });

  it("nobody re-confirms a version they wrote, even holding both roles, and only safety officers re-confirm", async () => {
    const both = await freshUser(h, ["engineer", "safety_officer"]);
    const cookie = await signIn(h, both.username, both.password);
    const created = await call(h, "post", "/api/profiles", cookie)
      .send({ name: `Dual ${Date.now().toString(36)}`, operatorId: team.operator.id, armId: arm.id, params: { ...compliantParams(arm), watchdogMs: 295 }, note: "" })
      .expect(201);
    const v = created.body.profile.latestVersion;
    await call(h, "post", `/api/versions/${v.id}/submit`, cookie).expect(200);
    await call(h, "post", `/api/versions/${v.id}/approve`, team.officer.cookie).send({ comment: "fine", paramsSha256: v.paramsSha256 }).expect(200);
    await setCeilings({ ...original, watchdogMaxMs: 290 });
    await setCeilings(original);
    const own = await reconfirm(v.id, "mine is fine", cookie);
    expect(own.status).toBe(403);
    expect(own.body.error.message).toContain("You wrote");
    expect((await reconfirm(v.id, "fine", team.engineer.cookie)).status).toBe(403);
    expect((await reconfirm(v.id, "fine", team.operator.cookie)).status).toBe(403);
    expect((await detailOf(v.id)).version.exceedsCeilings).toBe(true);
    await h.db.query("UPDATE users SET is_active = 0 WHERE id = ?", { replacements: [both.user.id] });
  });
});

describe("the flag in the database itself (migrations 0008, 0016)", () => {
  const statusOf = async (versionId: number) => {
    const [row] = await h.db.query<{ exceeds_ceilings: number; reconfirmation_id: number | null; state: string }>(
      "SELECT exceeds_ceilings, reconfirmation_id, state FROM version_status WHERE version_id = ?",
      { replacements: [versionId], type: QueryTypes.SELECT },
    );
    return row!;
  };
  const insertEvent = (versionId: number, kind: string, actorId: string | null, comment: string) =>
    h.db.query("INSERT INTO version_ceiling_events (version_id, kind, ceilings_revision, actor_id, comment) VALUES (?, ?, 1, ?, ?)", {
      replacements: [versionId, kind, actorId, comment],
    });

  it("a flag is cleared only by inserting a re-confirmation row, in that statement; a bare UPDATE is refused, even naming a used row", async () => {
    const profile = await createProfile(h, team, arm);
    const id = profile.latestVersion.id;
    await approveInDatabase(h, id, team.officer.id);
    await h.db.query("UPDATE version_status SET exceeds_ceilings = 1 WHERE version_id = ?", { replacements: [id] });
    await expect(h.db.query("UPDATE version_status SET exceeds_ceilings = 0 WHERE version_id = ?", { replacements: [id] })).rejects.toThrow(/flag stays/);
    // Not by the author, not without a comment.
    await expect(insertEvent(id, "reconfirm", team.engineer.id, "fine by me")).rejects.toThrow(/not the author/);
    await expect(insertEvent(id, "reconfirm", team.officer.id, " ")).rejects.toThrow(/needs a comment/);
    await insertEvent(id, "reconfirm", team.officer.id, "checked against the ceilings by hand");
    const cleared = await statusOf(id);
    expect(cleared.exceeds_ceilings).toBe(0);
    expect(cleared.reconfirmation_id).not.toBeNull();
    // Flag again, then try to clear it by pointing at the used re-confirmation, or a flag row: refused.
    await h.db.query("UPDATE version_status SET exceeds_ceilings = 1 WHERE version_id = ?", { replacements: [id] });
    await expect(h.db.query("UPDATE version_status SET exceeds_ceilings = 0, reconfirmation_id = ? WHERE version_id = ?", { replacements: [cleared.reconfirmation_id, id] })).rejects.toThrow(
      /flag stays/,
    );
    await insertEvent(id, "flag", team.officer.id, "flagged by hand");
    const [flagRow] = await h.db.query<{ id: number }>("SELECT MAX(id) AS id FROM version_ceiling_events WHERE version_id = ?", { replacements: [id], type: QueryTypes.SELECT });
    await expect(h.db.query("UPDATE version_status SET exceeds_ceilings = 0, reconfirmation_id = ? WHERE version_id = ?", { replacements: [flagRow!.id, id] })).rejects.toThrow(
      /only by inserting its version_ceiling_events row/,
    );
    expect((await statusOf(id)).exceeds_ceilings).toBe(1);
  });

  it("only an approved, flagged version can be re-confirmed, and the flag history is never changed or deleted", async () => {
    const profile = await createProfile(h, team, arm);
    const id = profile.latestVersion.id;
    await expect(insertEvent(id, "reconfirm", team.officer.id, "a draft")).rejects.toThrow(/only an approved version flagged/);
    await approveInDatabase(h, id, team.officer.id);
    await expect(insertEvent(id, "reconfirm", team.officer.id, "not flagged")).rejects.toThrow(/only an approved version flagged/);
    await insertEvent(id, "flag", team.officer.id, "a flag row");
    await expect(h.db.query("UPDATE version_ceiling_events SET comment = 'changed' WHERE version_id = ?", { replacements: [id] })).rejects.toThrow(/never changed/);
    await expect(owner.query("DELETE FROM version_ceiling_events WHERE version_id = ?", { replacements: [id] })).rejects.toThrow(/never deleted/);
  });

  it("a withdrawn submission stays withdrawn (only retiring remains) and keeps its note", async () => {
    const profile = await createProfile(h, team, arm);
    const id = profile.latestVersion.id;
    await call(h, "post", `/api/versions/${id}/submit`, team.engineer.cookie).expect(200);
    await call(h, "post", `/api/versions/${id}/withdraw`, team.engineer.cookie).send({ note: "not ready" }).expect(200);
    await expect(h.db.query("UPDATE version_status SET state = 'submitted' WHERE version_id = ?", { replacements: [id] })).rejects.toThrow(/withdrawn version can only be retired/);
    await expect(h.db.query("UPDATE version_status SET decision_comment = 'rewritten' WHERE version_id = ?", { replacements: [id] })).rejects.toThrow(/cannot be changed once made/);
    // Approving it by its approvals row is refused too: it is not submitted.
    const [v] = await h.db.query<{ params_sha256: string }>("SELECT params_sha256 FROM profile_versions WHERE id = ?", { replacements: [id], type: QueryTypes.SELECT });
    await expect(
      h.db.query("INSERT INTO approvals (version_id, approver_id, comment, params_sha256) VALUES (?, ?, 'sneak', ?)", { replacements: [id, team.officer.id, v!.params_sha256] }),
    ).rejects.toThrow(/only a submitted version can be approved/);
    expect((await statusOf(id)).state).toBe("withdrawn");
  });
});
