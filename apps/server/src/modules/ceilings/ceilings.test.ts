import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { ceilingsRecordSchema, type Arm, type Ceilings } from "@jogwright/shared";
import { call, createMailHarness, signIn, type Harness } from "../../test/harness.ts";
import { approvedProfile, compliantParams, closeWithTeam, createProfile, withTeam, type Team } from "../../test/profiles-fixture.ts";
import type { FakeSmtp } from "../../mail/fake-smtp.ts";
import { findUserById } from "../users/service.ts";
import { loadVersionForDriving } from "../driving/service.ts";

let h: Harness & { smtp: FakeSmtp };
let team: Team;
let arm: Arm;
let original: Ceilings;
beforeAll(async () => {
  ({ h, team, arm } = await withTeam(await createMailHarness()));
  original = (await call(h, "get", "/api/ceilings", team.operator.cookie)).body.ceilings;
});
afterAll(() => closeWithTeam(h, team));

async function setCeilings(ceilings: Ceilings, note = "test") {
  const current = (await call(h, "get", "/api/ceilings", team.officer.cookie)).body;
  const res = await call(h, "put", "/api/ceilings", team.officer.cookie).send({ revision: current.revision, ceilings, note });
  if (res.status !== 200) throw new Error(`put ceilings: ${res.status} ${JSON.stringify(res.body)}`);
  return res.body as { record: { revision: number }; flaggedVersionIds: number[] };
}

describe("site ceilings", () => {
  it("every signed-in person reads the ceilings in force, with their revision", async () => {
    const res = await call(h, "get", "/api/ceilings", team.operator.cookie);
    expect(res.status).toBe(200);
    const record = ceilingsRecordSchema.parse(res.body);
    expect(record.revision).toBeGreaterThanOrEqual(1);
  });

  it("a change from a revision that is no longer the latest is refused with stale_parent", async () => {
    const current = (await call(h, "get", "/api/ceilings", team.officer.cookie)).body;
    const ok = await call(h, "put", "/api/ceilings", team.officer.cookie).send({ revision: current.revision, ceilings: current.ceilings, note: "same values" });
    expect(ok.status).toBe(200);
    expect(ok.body.record.revision).toBe(current.revision + 1);
    expect(ok.body.record.updatedById).toBe(team.officer.id);
    const stale = await call(h, "put", "/api/ceilings", team.officer2.cookie).send({ revision: current.revision, ceilings: current.ceilings });
    expect(stale.status).toBe(409);
    expect(stale.body.error.code).toBe("stale_parent");
    expect(stale.body.error.message).toContain(`revision ${current.revision + 1}`);
  });

  it("invalid ceilings are refused field by field", async () => {
    const current = (await call(h, "get", "/api/ceilings", team.officer.cookie)).body;
    const res = await call(h, "put", "/api/ceilings", team.officer.cookie).send({ revision: current.revision, ceilings: { ...current.ceilings, allowedGuardPolicies: [] } });
    expect(res.status).toBe(400);
    expect(res.body.error.issues[0].path).toBe("ceilings.allowedGuardPolicies");
  });

  it("lowering a ceiling flags approved versions above it: not driveable, engineers mailed; the flag stays until a compliant version is approved", async () => {
    // A watchdog of 295 ms is within the 300 ms default and above the lowered 290 ms.
    const params = { ...compliantParams(arm), watchdogMs: 295 };
    const { profile, version: v1 } = await approvedProfile(h, team, arm, params);
    // engineer2 writes and gets approved a v2, so both engineers are engineers of the profile.
    const v2 = (await call(h, "post", `/api/profiles/${profile.id}/versions`, team.engineer2.cookie).send({ parentVersionId: v1.id, params })).body.version;
    await call(h, "post", `/api/versions/${v2.id}/submit`, team.engineer2.cookie).expect(200);
    await call(h, "post", `/api/versions/${v2.id}/approve`, team.officer.cookie).send({ comment: "same as v1", paramsSha256: v2.paramsSha256 }).expect(200);
    await h.ctx.mailer.settled();
    const mailsBefore = h.smtp.messages.length;

    const lowered = await setCeilings({ ...original, watchdogMaxMs: 290 }, "shorter watchdog for the new cell door");
    expect(lowered.flaggedVersionIds).toContain(v2.id);
    const detail = await call(h, "get", `/api/profiles/${profile.id}`, team.operator.cookie);
    expect(detail.body.versions[0]).toMatchObject({ id: v2.id, state: "approved", exceedsCeilings: true });
    expect(detail.body.profile.driveableVersionId).toBeNull();
    const operator = (await findUserById(h.db, team.operator.id))!;
    await expect(loadVersionForDriving(h.db, operator, v2.id)).rejects.toMatchObject({ status: 403, message: expect.stringContaining("ceilings") });

    await h.ctx.mailer.settled();
    const mail = h.smtp.messages.slice(mailsBefore).find((m) => m.subject.includes("Site ceilings lowered") && m.text.includes(`(id ${v2.id})`));
    expect(mail).toBeDefined();
    expect(mail!.to).toEqual(expect.arrayContaining([team.engineer.email, team.engineer2.email]));
    // Since issue 13 the operator who can no longer drive it and the safety officers hear of it too (reconfirm.test.ts).
    expect(mail!.to).toContain(team.operator.email);

    // Raising the ceilings again does not silently re-enable the flagged version.
    const raised = await setCeilings(original, "back to the site defaults");
    expect(raised.flaggedVersionIds).toContain(v2.id);
    const stillFlagged = await call(h, "get", `/api/profiles/${profile.id}`, team.operator.cookie);
    expect(stillFlagged.body.profile.driveableVersionId).toBeNull();
    const flags = await call(h, "get", `/api/audit?entity=version&actorId=${team.officer.id}`, await signIn(h, "sigrid"));
    const actions = flags.body.entries.filter((e: { entityId: string }) => e.entityId === String(v2.id)).map((e: { action: string }) => e.action);
    expect(actions).toContain("flag");
    expect(actions).not.toContain("unflag");

    // A compliant version approved deliberately is what makes the profile driveable again.
    const v3 = (await call(h, "post", `/api/profiles/${profile.id}/versions`, team.engineer.cookie).send({ parentVersionId: v2.id, params: { ...params, watchdogMs: 250 } })).body.version;
    await call(h, "post", `/api/versions/${v3.id}/submit`, team.engineer.cookie).expect(200);
    await call(h, "post", `/api/versions/${v3.id}/approve`, team.officer.cookie).send({ comment: "watchdog shortened", paramsSha256: v3.paramsSha256 }).expect(200);
    const after = await call(h, "get", `/api/profiles/${profile.id}`, team.operator.cookie);
    expect(after.body.profile.driveableVersionId).toBe(v3.id);
    expect(after.body.versions.find((v: { id: number }) => v.id === v2.id).state).toBe("superseded");
  });

  it("a shorter stopping distance or a higher minimum deceleration flags approved versions above it, like any other ceiling", async () => {
    // 250 mm/s at 0.8 m/s²: 0.25²/(2·0.8) = 39 mm (v²/2a, derived): within the default 50 mm, above 35 mm.
    const params = { ...compliantParams(arm), shaping: { ...compliantParams(arm).shaping, linearAccelMPerS2: 0.8 } };
    const { version: byStop } = await approvedProfile(h, team, arm, params);
    const { version: byDecel } = await approvedProfile(h, team, arm, params);
    try {
      const shorter = await setCeilings({ ...original, stoppingDistanceMaxM: 0.035 }, "shorter stops for the new fixture");
      expect(shorter.flaggedVersionIds).toContain(byStop.id);
      const operator = (await findUserById(h.db, team.operator.id))!;
      await expect(loadVersionForDriving(h.db, operator, byStop.id)).rejects.toMatchObject({ status: 403, message: expect.stringContaining("ceilings") });
      await setCeilings(original);
      // byDecel was flagged too by the shorter stop; a fresh one shows the deceleration minimum on its own.
      const { version: fresh } = await approvedProfile(h, team, arm, params);
      const firmer = await setCeilings({ ...original, decelerationMinMPerS2: 0.9 }, "firmer ramps");
      expect(firmer.flaggedVersionIds).toEqual(expect.arrayContaining([byDecel.id, fresh.id]));
      const flags = await call(h, "get", `/api/audit?entity=version&actorId=${team.officer.id}`, await signIn(h, "sigrid"));
      const summary = flags.body.entries.find((e: { entityId: string; action: string }) => e.entityId === String(fresh.id) && e.action === "flag")?.summary;
      // Named as people read it (issue 13, item 9: field labels, never the code).
      expect(summary).toContain("Linear acceleration limit");
      expect(summary).not.toContain("shaping.linearAccelMPerS2");
    } finally {
      await setCeilings(original);
    }
  });

  it("a submitted version that a lowered ceiling now exceeds cannot be approved", async () => {
    const profile = await createProfile(h, team, arm, { ...compliantParams(arm), watchdogMs: 295 });
    const v = profile.latestVersion;
    await call(h, "post", `/api/versions/${v.id}/submit`, team.engineer.cookie).expect(200);
    await setCeilings({ ...original, watchdogMaxMs: 290 });
    try {
      const res = await call(h, "post", `/api/versions/${v.id}/approve`, team.officer.cookie).send({ comment: "looks fine", paramsSha256: v.paramsSha256 });
      expect(res.status).toBe(422);
      expect(res.body.error.code).toBe("ceiling_exceeded");
      expect(res.body.error.issues).toEqual([{ path: "watchdogMs", message: expect.stringContaining("Input watchdog, at most") }]);
      expect((await call(h, "get", `/api/versions/${v.id}`, team.officer.cookie)).body.version.state).toBe("submitted");
    } finally {
      await setCeilings(original);
    }
  });
});
