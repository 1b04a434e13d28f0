import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { canonicalJson, profileSummarySchema, profileVersionSchema, type Arm } from "@jogwright/shared";
import { createHash } from "node:crypto";
import { QueryTypes, type Sequelize } from "sequelize";
import { call, createMailHarness, DEMO_BY_ROLE, signIn, type Harness } from "../../test/harness.ts";
import { approvedProfile, compliantParams, closeWithTeam, createProfile, freshTeam, retireTeam, withTeam, type Team } from "../../test/profiles-fixture.ts";
import type { FakeSmtp } from "../../mail/fake-smtp.ts";
import { createOwnerDb } from "../../test/owner-db.ts";
import { driveableVersionsFor, loadVersionForDriving } from "../driving/service.ts";
import { findUserById } from "../users/service.ts";

let h: Harness & { smtp: FakeSmtp };
/** The migration account, which holds DELETE: the triggers must refuse it too. */
let owner: Sequelize;
let team: Team;
let arm: Arm;
beforeAll(async () => {
  owner = createOwnerDb();
  ({ h, team, arm } = await withTeam(await createMailHarness()));
});
afterAll(() => closeWithTeam(h, team, owner));

const sha256 = (v: unknown) => createHash("sha256").update(canonicalJson(v)).digest("hex");

describe("profiles and versions", () => {
  it("an engineer creates a profile for an operator; version 1 is a draft carrying the SHA-256 of its canonical parameters", async () => {
    const params = compliantParams(arm);
    const profile = await createProfile(h, team, arm, params);
    expect(profileSummarySchema.parse(profile)).toBeTruthy();
    expect(profile.latestVersion).toMatchObject({ number: 1, state: "draft", parentVersionId: null, authorId: team.engineer.id });
    expect(profile.latestVersion.paramsSha256).toBe(sha256(params));
    const got = await call(h, "get", `/api/profiles/${profile.id}`, team.officer.cookie);
    expect(got.status).toBe(200);
    expect(got.body.versions).toHaveLength(1);
    expect(profileVersionSchema.parse(got.body.versions[0]).params).toEqual(params);
  });

  it("parameters that do not fit the arm are refused on the joint-rate caps field", async () => {
    const params = { ...compliantParams(arm), jointRateCapsRadPerS: [1, 1, 1] };
    const res = await call(h, "post", "/api/profiles", team.engineer.cookie).send({ name: "Too few joints", operatorId: team.operator.id, armId: arm.id, params });
    expect(res.status).toBe(400);
    expect(res.body.error.issues[0].path).toBe("params.jointRateCapsRadPerS");
  });

  it("a profile for someone who is not an operator is refused on the operator field", async () => {
    const res = await call(h, "post", "/api/profiles", team.engineer.cookie).send({ name: "Nobody's", operatorId: team.engineer2.id, armId: arm.id, params: compliantParams(arm) });
    expect(res.status).toBe(400);
    expect(res.body.error.issues[0].path).toBe("operatorId");
  });

  it("every save is a new version on top of the latest one, newest listed first", async () => {
    const profile = await createProfile(h, team, arm);
    const params = { ...compliantParams(arm), watchdogMs: 150 };
    const res = await call(h, "post", `/api/profiles/${profile.id}/versions`, team.engineer2.cookie).send({ parentVersionId: profile.latestVersion.id, params, note: "shorter watchdog" });
    expect(res.status).toBe(201);
    expect(res.body.version).toMatchObject({ number: 2, parentVersionId: profile.latestVersion.id, state: "draft", authorId: team.engineer2.id, note: "shorter watchdog" });
    const got = await call(h, "get", `/api/profiles/${profile.id}`, team.engineer.cookie);
    expect(got.body.versions.map((v: { number: number }) => v.number)).toEqual([2, 1]);
    expect(got.body.profile.latestVersion.number).toBe(2);
  });

  it("a save from a parent that is no longer the latest is refused with stale_parent naming the latest version and its author", async () => {
    const profile = await createProfile(h, team, arm);
    const parent = profile.latestVersion.id;
    await call(h, "post", `/api/profiles/${profile.id}/versions`, team.engineer2.cookie).send({ parentVersionId: parent, params: compliantParams(arm) }).expect(201);
    const res = await call(h, "post", `/api/profiles/${profile.id}/versions`, team.engineer.cookie).send({ parentVersionId: parent, params: { ...compliantParams(arm), watchdogMs: 120 } });
    expect(res.status).toBe(409);
    expect(res.body.error.code).toBe("stale_parent");
    expect(res.body.error.message).toContain("Version 2");
    expect(res.body.error.message).toContain(team.engineer2.displayName);
    const got = await call(h, "get", `/api/profiles/${profile.id}`, team.engineer.cookie);
    expect(got.body.versions).toHaveLength(2);
  });

  it("of two concurrent saves from the same parent exactly one wins and nothing is overwritten", async () => {
    const profile = await createProfile(h, team, arm);
    const parent = profile.latestVersion.id;
    const [a, b] = await Promise.all([
      call(h, "post", `/api/profiles/${profile.id}/versions`, team.engineer.cookie).send({ parentVersionId: parent, params: { ...compliantParams(arm), watchdogMs: 110 } }),
      call(h, "post", `/api/profiles/${profile.id}/versions`, team.engineer2.cookie).send({ parentVersionId: parent, params: { ...compliantParams(arm), watchdogMs: 130 } }),
    ]);
    expect([a.status, b.status].sort()).toEqual([201, 409]);
    expect([a, b].find((r) => r.status === 409)!.body.error.code).toBe("stale_parent");
    const got = await call(h, "get", `/api/profiles/${profile.id}`, team.engineer.cookie);
    expect(got.body.versions.map((v: { number: number }) => v.number)).toEqual([2, 1]);
  });

  it("a non-numeric id is a 400 and an unknown one a 404", async () => {
    expect((await call(h, "get", "/api/profiles/abcdefgh12345678", team.engineer.cookie)).status).toBe(400);
    expect((await call(h, "get", "/api/profiles/99999999", team.engineer.cookie)).status).toBe(404);
    expect((await call(h, "get", "/api/versions/99999999", team.engineer.cookie)).status).toBe(404);
  });

  it("an operator sees only their own profiles; another operator's is not found", async () => {
    const profile = await createProfile(h, team, arm);
    const mine = await call(h, "get", "/api/profiles", team.operator.cookie);
    expect(mine.body.profiles.length).toBeGreaterThan(0);
    expect(mine.body.profiles.every((p: { operatorId: string }) => p.operatorId === team.operator.id)).toBe(true);
    const olena = await signIn(h, DEMO_BY_ROLE.operator);
    expect((await call(h, "get", `/api/profiles/${profile.id}`, olena)).status).toBe(404);
    expect((await call(h, "get", `/api/versions/${profile.latestVersion.id}`, olena)).status).toBe(404);
  });

  it("the operators list holds active operators only", async () => {
    const res = await call(h, "get", "/api/operators", team.engineer.cookie);
    expect(res.status).toBe(200);
    const ids = res.body.operators.map((o: { id: string }) => o.id);
    expect(ids).toContain(team.operator.id);
    expect(ids).not.toContain(team.engineer.id);
  });
});

describe("the approval workflow", () => {
  it("submit, then approve by a safety officer: the version is locked, the approval records who, the comment and the hash", async () => {
    const profile = await createProfile(h, team, arm);
    const v = profile.latestVersion;
    const submitted = await call(h, "post", `/api/versions/${v.id}/submit`, team.engineer.cookie);
    expect(submitted.status).toBe(200);
    expect(submitted.body.version.state).toBe("submitted");
    expect(submitted.body.version.submittedAt).not.toBeNull();
    const queue = await call(h, "get", "/api/reviews", team.officer.cookie);
    expect(queue.body.versions.find((x: { id: number }) => x.id === v.id)).toMatchObject({ profileName: profile.name, armName: arm.name });

    const approved = await call(h, "post", `/api/versions/${v.id}/approve`, team.officer.cookie).send({ comment: "Trial evidence checked", paramsSha256: v.paramsSha256 });
    expect(approved.status).toBe(200);
    expect(approved.body.version).toMatchObject({ state: "approved", decidedById: team.officer.id, decisionComment: "Trial evidence checked", exceedsCeilings: false });
    const detail = await call(h, "get", `/api/versions/${v.id}`, team.operator.cookie);
    expect(detail.body.approval).toMatchObject({ approverName: team.officer.displayName, comment: "Trial evidence checked", paramsSha256: v.paramsSha256 });
    expect(detail.body.violations).toEqual([]);
    expect(detail.body.approvedVersion.id).toBe(v.id);
    const [row] = await h.db.query<{ locked_at: Date | null }>("SELECT locked_at FROM profile_versions WHERE id = ?", { replacements: [v.id], type: QueryTypes.SELECT });
    expect(row!.locked_at).not.toBeNull();
    const summary = await call(h, "get", `/api/profiles/${profile.id}`, team.operator.cookie);
    expect(summary.body.profile.driveableVersionId).toBe(v.id);
  });

  it("a newer approval supersedes the older one, which is kept", async () => {
    const { profile, version: v1 } = await approvedProfile(h, team, arm);
    const v2 = (await call(h, "post", `/api/profiles/${profile.id}/versions`, team.engineer.cookie).send({ parentVersionId: v1.id, params: { ...compliantParams(arm), watchdogMs: 180 } })).body.version;
    await call(h, "post", `/api/versions/${v2.id}/submit`, team.engineer.cookie).expect(200);
    const review = await call(h, "get", `/api/versions/${v2.id}`, team.officer.cookie);
    expect(review.body.approvedVersion.id).toBe(v1.id);
    await call(h, "post", `/api/versions/${v2.id}/approve`, team.officer2.cookie).send({ comment: "better watchdog", paramsSha256: v2.paramsSha256 }).expect(200);
    const got = await call(h, "get", `/api/profiles/${profile.id}`, team.engineer.cookie);
    expect(got.body.versions.map((v: { state: string }) => v.state)).toEqual(["approved", "superseded"]);
    expect(got.body.profile.driveableVersionId).toBe(v2.id);
  });

  it("a safety officer rejects a submitted version with a reason", async () => {
    const profile = await createProfile(h, team, arm);
    const v = profile.latestVersion;
    await call(h, "post", `/api/versions/${v.id}/submit`, team.engineer.cookie).expect(200);
    const res = await call(h, "post", `/api/versions/${v.id}/reject`, team.officer.cookie).send({ reason: "No trial near the wrist singularity." });
    expect(res.status).toBe(200);
    expect(res.body.version).toMatchObject({ state: "rejected", decisionComment: "No trial near the wrist singularity.", decidedById: team.officer.id });
  });

  it("any version can be retired with a reason, and a retired one cannot be retired again", async () => {
    const { profile, version } = await approvedProfile(h, team, arm);
    const res = await call(h, "post", `/api/versions/${version.id}/retire`, team.officer.cookie).send({ reason: "Cell re-layout." });
    expect(res.status).toBe(200);
    expect(res.body.version.state).toBe("retired");
    expect((await call(h, "get", `/api/profiles/${profile.id}`, team.operator.cookie)).body.profile.driveableVersionId).toBeNull();
    const again = await call(h, "post", `/api/versions/${version.id}/retire`, team.officer.cookie).send({ reason: "Twice." });
    expect(again.status).toBe(409);
    expect(again.body.error.code).toBe("invalid_transition");
    const draft = await createProfile(h, team, arm);
    expect((await call(h, "post", `/api/versions/${draft.latestVersion.id}/retire`, team.officer.cookie).send({ reason: "Abandoned." })).body.version.state).toBe("retired");
  });

  it("nobody approves or rejects their own version, even holding both roles", async () => {
    const both = await freshTeam(h);
    const dual = both.engineer;
    await h.db.query("INSERT INTO user_roles (user_id, role) VALUES (?, 'safety_officer')", { replacements: [dual.id] });
    const profile = await createProfile(h, both, arm);
    const v = profile.latestVersion;
    await call(h, "post", `/api/versions/${v.id}/submit`, dual.cookie).expect(200);
    const own = await call(h, "post", `/api/versions/${v.id}/approve`, dual.cookie).send({ comment: "mine", paramsSha256: v.paramsSha256 });
    expect(own.status).toBe(403);
    expect(own.body.error.code).toBe("forbidden");
    expect(own.body.error.message).toMatch(/You wrote .* so you cannot approve it/);
    const ownReject = await call(h, "post", `/api/versions/${v.id}/reject`, dual.cookie).send({ reason: "mine" });
    expect(ownReject.status).toBe(403);
    await retireTeam(h, both);
  });

  it("an approval whose hash differs from the version's parameters is refused", async () => {
    const profile = await createProfile(h, team, arm);
    const v = profile.latestVersion;
    await call(h, "post", `/api/versions/${v.id}/submit`, team.engineer.cookie).expect(200);
    const res = await call(h, "post", `/api/versions/${v.id}/approve`, team.officer.cookie).send({ comment: "looks fine", paramsSha256: "0".repeat(64) });
    expect(res.status).toBe(409);
    expect(res.body.error.issues[0].path).toBe("paramsSha256");
    expect((await call(h, "get", `/api/versions/${v.id}`, team.officer.cookie)).body.version.state).toBe("submitted");
  });

  it("a version stored before the new profile fields reads with their defaults, keeps its stored SHA-256 and is approved with it", async () => {
    const profile = await createProfile(h, team, arm);
    const v1 = profile.latestVersion;
    // Version 2 exactly as an older server wrote it: its JSON has no jointAccelFraction, driftReanchorM, nullSpace.
    const { jointAccelFraction: _a, driftReanchorM: _r, nullSpace: _n, ...old } = compliantParams(arm);
    const storedSha = sha256(old);
    const [id] = await h.db.query(
      "INSERT INTO profile_versions (profile_id, number, parent_version_id, params, params_sha256, note, author_id) VALUES (?, 2, ?, ?, ?, 'old', ?)",
      { replacements: [profile.id, v1.id, JSON.stringify(old), storedSha, team.engineer.id], type: QueryTypes.INSERT },
    );
    await h.db.query("INSERT INTO version_status (version_id, state) VALUES (?, 'draft')", { replacements: [id] });
    const got = (await call(h, "get", `/api/versions/${id}`, team.officer.cookie)).body.version;
    expect(got.params).toMatchObject({ jointAccelFraction: 0.5, driftReanchorM: 0.005, nullSpace: { enabled: false, gainPerS: 0.5 } });
    // The identity is the stored hash of what was saved, not a hash of the parsed (defaulted) object.
    expect(got.paramsSha256).toBe(storedSha);
    expect(sha256(got.params)).not.toBe(storedSha);
    await call(h, "post", `/api/versions/${id}/submit`, team.engineer.cookie).expect(200);
    const approved = await call(h, "post", `/api/versions/${id}/approve`, team.officer.cookie).send({ comment: "old but fine", paramsSha256: storedSha });
    expect(approved.status).toBe(200);
    expect(approved.body.version).toMatchObject({ state: "approved", paramsSha256: storedSha });
    const [row] = await h.db.query<{ params_sha256: string }>("SELECT params_sha256 FROM approvals WHERE version_id = ?", { replacements: [id], type: QueryTypes.SELECT });
    expect(row!.params_sha256).toBe(storedSha);
  });

  it("a version whose controlled stop is longer than the site's 50 mm cannot be submitted; the refusal names the ceiling", async () => {
    // 250 mm/s at 0.6 m/s²: 0.25²/(2·0.6) = 52 mm (v²/2a, derived), above the default 50 mm.
    const params = { ...compliantParams(arm), shaping: { ...compliantParams(arm).shaping, linearAccelMPerS2: 0.6 } };
    const profile = await createProfile(h, team, arm, params);
    const res = await call(h, "post", `/api/versions/${profile.latestVersion.id}/submit`, team.engineer.cookie);
    expect(res.status).toBe(422);
    expect(res.body.error.code).toBe("ceiling_exceeded");
    expect(res.body.error.issues).toEqual([{ path: "shaping.linearAccelMPerS2", message: expect.stringContaining("Controlled stop, at most") }]);
  });

  it("a version above a site ceiling cannot be submitted; the refusal names the field and the ceiling", async () => {
    const params = { ...compliantParams(arm), tcpLinearCapMPerS: 0.3, watchdogMs: 400 };
    const profile = await createProfile(h, team, arm, params);
    const detail = await call(h, "get", `/api/versions/${profile.latestVersion.id}`, team.engineer.cookie);
    expect(detail.body.violations.map((v: { field: string }) => v.field)).toEqual(["tcpLinearCapMPerS", "watchdogMs"]);
    const res = await call(h, "post", `/api/versions/${profile.latestVersion.id}/submit`, team.engineer.cookie);
    expect(res.status).toBe(422);
    expect(res.body.error.code).toBe("ceiling_exceeded");
    expect(res.body.error.message).toContain("tcpLinearCapMPerS");
    expect(res.body.error.message).toContain("tcpLinearMaxMPerS");
    // ISO 10218-1:2011 manual reduced speed: 250 mm/s is the default TCP linear ceiling.
    expect(res.body.error.message).toContain("250 mm/s");
    expect(res.body.error.issues.map((i: { path: string }) => i.path)).toEqual(["tcpLinearCapMPerS", "watchdogMs"]);
  });

  it("invalid transitions are refused: approving a draft, submitting twice, rejecting an approved version", async () => {
    const profile = await createProfile(h, team, arm);
    const v = profile.latestVersion;
    const draftApprove = await call(h, "post", `/api/versions/${v.id}/approve`, team.officer.cookie).send({ comment: "early", paramsSha256: v.paramsSha256 });
    expect(draftApprove.status).toBe(409);
    expect(draftApprove.body.error.code).toBe("invalid_transition");
    await call(h, "post", `/api/versions/${v.id}/submit`, team.engineer.cookie).expect(200);
    expect((await call(h, "post", `/api/versions/${v.id}/submit`, team.engineer.cookie)).body.error.code).toBe("invalid_transition");
    await call(h, "post", `/api/versions/${v.id}/approve`, team.officer.cookie).send({ comment: "fine", paramsSha256: v.paramsSha256 }).expect(200);
    const reject = await call(h, "post", `/api/versions/${v.id}/reject`, team.officer2.cookie).send({ reason: "too late" });
    expect(reject.status).toBe(409);
    expect(reject.body.error.code).toBe("invalid_transition");
  });
});

describe("locked versions in the database itself", () => {
  it("a raw SQL UPDATE or DELETE of an approved (locked) version row fails with the trigger's message", async () => {
    const { version } = await approvedProfile(h, team, arm);
    await expect(h.db.query("UPDATE profile_versions SET note = 'tampered' WHERE id = ?", { replacements: [version.id] })).rejects.toThrow(/locked \(approved\): it cannot be changed/);
    await expect(h.db.query("UPDATE profile_versions SET locked_at = NULL WHERE id = ?", { replacements: [version.id] })).rejects.toThrow(/locked/);
    // DELETE as the migration account: the runtime account may not delete versions at all (db/privileges.ts).
    await expect(owner.query("DELETE FROM profile_versions WHERE id = ?", { replacements: [version.id] })).rejects.toThrow(/locked \(approved\): it cannot be deleted/);
  });

  it("even an unlocked version's content cannot be changed by SQL: only locking it is allowed", async () => {
    const profile = await createProfile(h, team, arm);
    await expect(h.db.query("UPDATE profile_versions SET params_sha256 = REPEAT('0', 64) WHERE id = ?", { replacements: [profile.latestVersion.id] })).rejects.toThrow(/immutable/);
  });

  it("the lifecycle holds under raw SQL: an approved version cannot go back to draft, a flag cannot be cleared, status rows cannot be deleted", async () => {
    const { version } = await approvedProfile(h, team, arm);
    await expect(h.db.query("UPDATE version_status SET state = 'draft' WHERE version_id = ?", { replacements: [version.id] })).rejects.toThrow(/only be superseded or retired/);
    await h.db.query("UPDATE version_status SET exceeds_ceilings = 1 WHERE version_id = ?", { replacements: [version.id] });
    await expect(h.db.query("UPDATE version_status SET exceeds_ceilings = 0 WHERE version_id = ?", { replacements: [version.id] })).rejects.toThrow(/flag stays/);
    await expect(owner.query("DELETE FROM version_status WHERE version_id = ?", { replacements: [version.id] })).rejects.toThrow(/never deleted/);
    await h.db.query("UPDATE version_status SET state = 'retired' WHERE version_id = ?", { replacements: [version.id] });
    await expect(h.db.query("UPDATE version_status SET state = 'approved' WHERE version_id = ?", { replacements: [version.id] })).rejects.toThrow(/stays retired/);
  });

  it("approvals cannot be updated or deleted", async () => {
    const { version } = await approvedProfile(h, team, arm);
    await expect(h.db.query("UPDATE approvals SET comment = 'changed' WHERE version_id = ?", { replacements: [version.id] })).rejects.toThrow(/append-only/);
    await expect(owner.query("DELETE FROM approvals WHERE version_id = ?", { replacements: [version.id] })).rejects.toThrow(/append-only/);
  });
});

describe("the approval lifecycle cannot be forged with raw SQL (migration 0014)", () => {
  const statusOf = async (versionId: number) => {
    const [row] = await h.db.query<{ state: string; decided_by: string | null; decided_at: Date | null; decision_comment: string | null; locked_at: Date | null }>(
      `SELECT s.state, s.decided_by, s.decided_at, s.decision_comment, v.locked_at
       FROM version_status s JOIN profile_versions v ON v.id = s.version_id WHERE s.version_id = ?`,
      { replacements: [versionId], type: QueryTypes.SELECT },
    );
    return row!;
  };
  const submitted = async () => {
    const profile = await createProfile(h, team, arm);
    await call(h, "post", `/api/versions/${profile.latestVersion.id}/submit`, team.engineer.cookie).expect(200);
    return profile.latestVersion;
  };

  it("UPDATE version_status SET state = 'approved' is refused on a draft and on a submitted version, with or without a plausible decision", async () => {
    const draft = await createProfile(h, team, arm);
    await expect(h.db.query("UPDATE version_status SET state = 'approved' WHERE version_id = ?", { replacements: [draft.latestVersion.id] })).rejects.toThrow(
      /only a submitted version can be approved/,
    );
    const v = await submitted();
    await expect(h.db.query("UPDATE version_status SET state = 'approved' WHERE version_id = ?", { replacements: [v.id] })).rejects.toThrow(/approved only by inserting its approvals row/);
    await expect(
      h.db.query("UPDATE version_status SET state = 'approved', decided_by = ?, decided_at = CURRENT_TIMESTAMP(3), decision_comment = 'ok' WHERE version_id = ?", {
        replacements: [team.officer.id, v.id],
      }),
    ).rejects.toThrow(/approved only by inserting its approvals row/);
    // Nor can the lock be taken on its own first, nor a status row be born approved.
    await expect(h.db.query("UPDATE profile_versions SET locked_at = CURRENT_TIMESTAMP(3) WHERE id = ?", { replacements: [v.id] })).rejects.toThrow(/locked only by its approval/);
    await expect(h.db.query("UPDATE version_status SET version_id = ? WHERE version_id = ?", { replacements: [v.id + 100000, v.id] })).rejects.toThrow(/belongs to its version/);
    expect(await statusOf(v.id)).toMatchObject({ state: "submitted", decided_by: null, locked_at: null });
    // The operator cannot drive it.
    const operator = (await findUserById(h.db, team.operator.id))!;
    expect((await driveableVersionsFor(h.db, operator)).some((d) => d.id === v.id)).toBe(false);
  });

  it("a status row starts as a draft: a version written by raw SQL cannot be given an approved status row", async () => {
    const profile = await createProfile(h, team, arm);
    const v1 = profile.latestVersion;
    // In a transaction that is rolled back, so no version without a status row is left behind.
    const t = await h.db.transaction();
    try {
      const [id] = await h.db.query(
        `INSERT INTO profile_versions (profile_id, number, parent_version_id, params, params_sha256, note, author_id)
         SELECT profile_id, 2, id, params, params_sha256, 'forged', author_id FROM profile_versions WHERE id = ?`,
        { replacements: [v1.id], type: QueryTypes.INSERT, transaction: t },
      );
      await expect(
        h.db.query("INSERT INTO version_status (version_id, state, decided_by, decided_at, decision_comment) VALUES (?, 'approved', ?, CURRENT_TIMESTAMP(3), 'ok')", {
          replacements: [id, team.officer.id],
          transaction: t,
        }),
      ).rejects.toThrow(/starts as a draft/);
    } finally {
      await t.rollback();
    }
  });

  it("the approvals row is the approval: inserting it locks the version and approves it in the same statement, and only for a submitted version by someone other than the author with the version's hash", async () => {
    const v = await submitted();
    const insert = (approverId: string, sha = v.paramsSha256) =>
      h.db.query("INSERT INTO approvals (version_id, approver_id, comment, params_sha256) VALUES (?, ?, 'raw approval', ?)", { replacements: [v.id, approverId, sha] });
    await expect(insert(team.engineer.id)).rejects.toThrow(/author of a version cannot approve it/);
    await expect(insert(team.officer.id, "0".repeat(64))).rejects.toThrow(/SHA-256 of the version's parameters/);
    expect(await statusOf(v.id)).toMatchObject({ state: "submitted", locked_at: null });
    await insert(team.officer.id);
    const [approval] = await h.db.query<{ approved_at: Date }>("SELECT approved_at FROM approvals WHERE version_id = ?", { replacements: [v.id], type: QueryTypes.SELECT });
    const status = await statusOf(v.id);
    expect(status).toMatchObject({ state: "approved", decided_by: team.officer.id, decision_comment: "raw approval" });
    expect(status.decided_at).toEqual(approval!.approved_at);
    expect(status.locked_at).toEqual(approval!.approved_at);
    // A draft cannot be approved this way either.
    const draft = await createProfile(h, team, arm);
    await expect(
      h.db.query("INSERT INTO approvals (version_id, approver_id, comment, params_sha256) VALUES (?, ?, 'raw', ?)", {
        replacements: [draft.latestVersion.id, team.officer.id, draft.latestVersion.paramsSha256],
      }),
    ).rejects.toThrow(/only a submitted version can be approved/);
  });

  it("an approval through the API still approves, locks and records one approvals row whose approver, time and comment are the version's decision", async () => {
    const { version } = await approvedProfile(h, team, arm);
    const [approval] = await h.db.query<{ approver_id: string; approved_at: Date; comment: string }>(
      "SELECT approver_id, approved_at, comment FROM approvals WHERE version_id = ?",
      { replacements: [version.id], type: QueryTypes.SELECT },
    );
    const status = await statusOf(version.id);
    expect(status).toMatchObject({ state: "approved", decided_by: approval!.approver_id, decision_comment: approval!.comment });
    expect(approval!.approver_id).toBe(team.officer.id);
    expect(status.decided_at).toEqual(approval!.approved_at);
    expect(status.locked_at).not.toBeNull();
  });

  it("the approver, time and comment of an approved or rejected version cannot be rewritten", async () => {
    const { version } = await approvedProfile(h, team, arm);
    const refused = /cannot be changed once made/;
    await expect(h.db.query("UPDATE version_status SET decided_by = ? WHERE version_id = ?", { replacements: [team.officer2.id, version.id] })).rejects.toThrow(refused);
    await expect(h.db.query("UPDATE version_status SET decision_comment = 'rewritten' WHERE version_id = ?", { replacements: [version.id] })).rejects.toThrow(refused);
    await expect(h.db.query("UPDATE version_status SET decided_at = '2020-01-01' WHERE version_id = ?", { replacements: [version.id] })).rejects.toThrow(refused);
    await expect(h.db.query("UPDATE version_status SET decided_by = NULL, decision_comment = NULL WHERE version_id = ?", { replacements: [version.id] })).rejects.toThrow(refused);
    expect(await statusOf(version.id)).toMatchObject({ decided_by: team.officer.id, decision_comment: "looks right" });

    const v = await submitted();
    await call(h, "post", `/api/versions/${v.id}/reject`, team.officer.cookie).send({ reason: "Needs a trial." }).expect(200);
    await expect(h.db.query("UPDATE version_status SET decision_comment = 'fine after all' WHERE version_id = ?", { replacements: [v.id] })).rejects.toThrow(refused);
  });

  it("retiring an approved version keeps its decision; the retirement and its reason are audited", async () => {
    const { version } = await approvedProfile(h, team, arm);
    const res = await call(h, "post", `/api/versions/${version.id}/retire`, team.officer2.cookie).send({ reason: "Cell re-layout." });
    expect(res.status).toBe(200);
    expect(res.body.version).toMatchObject({ state: "retired", decidedById: team.officer.id, decisionComment: "looks right" });
    const [audit] = await h.db.query<{ actor_id: string; summary: string }>(
      "SELECT actor_id, summary FROM audit_log WHERE entity = 'version' AND entity_id = ? AND action = 'retire'",
      { replacements: [String(version.id)], type: QueryTypes.SELECT },
    );
    expect(audit).toMatchObject({ actor_id: team.officer2.id, summary: expect.stringContaining("Cell re-layout.") });
  });
});

describe("who may drive which version", () => {
  it("an operator may drive only the current approved version of their own profile", async () => {
    const { profile, version: v1 } = await approvedProfile(h, team, arm);
    const operator = (await findUserById(h.db, team.operator.id))!;
    const list = await driveableVersionsFor(h.db, operator);
    expect(list.some((v) => v.id === v1.id && v.kind === "approved")).toBe(true);
    expect(list.every((v) => v.state === "approved" && v.operatorId === operator.id)).toBe(true);
    const loaded = await loadVersionForDriving(h.db, operator, v1.id);
    expect(loaded.profile.id).toBe(profile.id);
    expect(loaded.arm.id).toBe(arm.id);

    const v2 = (await call(h, "post", `/api/profiles/${profile.id}/versions`, team.engineer.cookie).send({ parentVersionId: v1.id, params: compliantParams(arm) })).body.version;
    await expect(loadVersionForDriving(h.db, operator, v2.id)).rejects.toMatchObject({ status: 403, message: expect.stringContaining("draft") });
    const olena = (await findUserById(h.db, (await call(h, "get", "/api/auth/me", await signIn(h, "olena"))).body.user.id))!;
    // Another operator's version is "not found" to an operator, and the refusal names nobody.
    const refusal = loadVersionForDriving(h.db, olena, v1.id);
    await expect(refusal).rejects.toMatchObject({ status: 404, code: "not_found", message: "No such version." });
  });

  it("an engineer may drive any version that is not retired, drafts marked; a safety officer none", async () => {
    const profile = await createProfile(h, team, arm);
    const engineer = (await findUserById(h.db, team.engineer.id))!;
    const officer = (await findUserById(h.db, team.officer.id))!;
    const list = await driveableVersionsFor(h.db, engineer);
    expect(list.find((v) => v.id === profile.latestVersion.id)).toMatchObject({ kind: "test-drive", profileName: profile.name });
    await expect(loadVersionForDriving(h.db, engineer, profile.latestVersion.id)).resolves.toMatchObject({ version: { id: profile.latestVersion.id } });
    expect(await driveableVersionsFor(h.db, officer)).toEqual([]);
    await expect(loadVersionForDriving(h.db, officer, profile.latestVersion.id)).rejects.toMatchObject({ status: 403 });
    await call(h, "post", `/api/versions/${profile.latestVersion.id}/retire`, team.officer.cookie).send({ reason: "done" }).expect(200);
    await expect(loadVersionForDriving(h.db, engineer, profile.latestVersion.id)).rejects.toMatchObject({ status: 403, message: expect.stringContaining("retired") });
  });
});
