import { beforeAll, describe, expect, it } from "vitest";
import { ceilingsRecordSchema, DEFAULT_CEILINGS, type Ceilings } from "@jogwright/shared";
import { modelsOf } from "../../db/models.ts";
import { call, createMailHarness, signIn } from "../../test/harness.ts";
import { approvedProfile, compliantParams, createProfile, teamForFile } from "../../test/profiles-fixture.ts";
import { findUserById } from "../users/service.ts";
import { loadVersionForDriving } from "../driving/service.ts";

const cast = teamForFile(createMailHarness);
let original: Ceilings;
beforeAll(async () => {
  original = (await call(cast.h, "get", "/api/ceilings", cast.team.operator.cookie)).body.ceilings;
});

async function setCeilings(ceilings: Ceilings, note = "test") {
  const current = (await call(cast.h, "get", "/api/ceilings", cast.team.officer.cookie)).body;
  const res = await call(cast.h, "put", "/api/ceilings", cast.team.officer.cookie).send({ revision: current.revision, ceilings, note });
  if (res.status !== 200) throw new Error(`put ceilings: ${res.status} ${JSON.stringify(res.body)}`);
  return res.body as { record: { revision: number }; flaggedVersionIds: number[] };
}

describe("site ceilings", () => {
  it("every signed-in person reads the ceilings in force, with their revision", async () => {
    const res = await call(cast.h, "get", "/api/ceilings", cast.team.operator.cookie);
    expect(res.status).toBe(200);
    const record = ceilingsRecordSchema.parse(res.body);
    expect(record.revision).toBeGreaterThanOrEqual(1);
  });

  it("revision 1 as migration 0005 stored it (before the stop ceilings) reads with 50 mm and 0.5 m/s²: the defaults", async () => {
    // The stored JSON lacks the later ceilings; the model reads it through ceilingsSchema, which fills them.
    const row = (await modelsOf(cast.h.db).SiteCeilings.findOne({ where: { revision: 1 } }))!;
    const stored: unknown = row.getDataValue("ceilings");
    const json = (typeof stored === "string" ? JSON.parse(stored) : stored) as Record<string, unknown>;
    expect(json).toMatchObject({ tcpLinearMaxMPerS: 0.25, watchdogMaxMs: 300 });
    expect(json).not.toHaveProperty("stoppingDistanceMaxM");
    expect(json).not.toHaveProperty("decelerationMinMPerS2");
    expect(row.ceilings.stoppingDistanceMaxM).toBe(0.05);
    expect(row.ceilings.decelerationMinMPerS2).toBe(0.5);
    expect(row.ceilings).toEqual(DEFAULT_CEILINGS);
  });

  it("a change from a revision that is no longer the latest is refused with stale_parent", async () => {
    const current = (await call(cast.h, "get", "/api/ceilings", cast.team.officer.cookie)).body;
    const ok = await call(cast.h, "put", "/api/ceilings", cast.team.officer.cookie).send({ revision: current.revision, ceilings: current.ceilings, note: "same values" });
    expect(ok.status).toBe(200);
    expect(ok.body.record.revision).toBe(current.revision + 1);
    expect(ok.body.record.updatedById).toBe(cast.team.officer.id);
    const stale = await call(cast.h, "put", "/api/ceilings", cast.team.officer2.cookie).send({ revision: current.revision, ceilings: current.ceilings });
    expect(stale.status).toBe(409);
    expect(stale.body.error.code).toBe("stale_parent");
    expect(stale.body.error.message).toContain(`revision ${current.revision + 1}`);
  });

  it("invalid ceilings are refused field by field", async () => {
    const current = (await call(cast.h, "get", "/api/ceilings", cast.team.officer.cookie)).body;
    const res = await call(cast.h, "put", "/api/ceilings", cast.team.officer.cookie).send({ revision: current.revision, ceilings: { ...current.ceilings, allowedGuardPolicies: [] } });
    expect(res.status).toBe(400);
    expect(res.body.error.issues[0].path).toBe("ceilings.allowedGuardPolicies");
  });

  it("lowering a ceiling flags approved versions above it: not driveable, engineers mailed; the flag stays until a compliant version is approved", async () => {
    // A watchdog of 295 ms is within the 300 ms default and above the lowered 290 ms.
    const params = { ...compliantParams(cast.arm), watchdogMs: 295 };
    const { profile, version: v1 } = await approvedProfile(cast.h, cast.team, cast.arm, params);
    // engineer2 writes and gets approved a v2, so both engineers are engineers of the profile.
    const v2 = (await call(cast.h, "post", `/api/profiles/${profile.id}/versions`, cast.team.engineer2.cookie).send({ parentVersionId: v1.id, params })).body.version;
    await call(cast.h, "post", `/api/versions/${v2.id}/submit`, cast.team.engineer2.cookie).expect(200);
    await call(cast.h, "post", `/api/versions/${v2.id}/approve`, cast.team.officer.cookie).send({ comment: "same as v1", paramsSha256: v2.paramsSha256 }).expect(200);
    await cast.h.ctx.mailer.settled();
    const mailsBefore = cast.h.smtp.messages.length;

    const lowered = await setCeilings({ ...original, watchdogMaxMs: 290 }, "shorter watchdog for the new cell door");
    expect(lowered.flaggedVersionIds).toContain(v2.id);
    const detail = await call(cast.h, "get", `/api/profiles/${profile.id}`, cast.team.operator.cookie);
    expect(detail.body.versions[0]).toMatchObject({ id: v2.id, state: "approved", exceedsCeilings: true });
    expect(detail.body.profile.driveableVersionId).toBeNull();
    const operator = (await findUserById(cast.h.db, cast.team.operator.id))!;
    await expect(loadVersionForDriving(cast.h.db, operator, v2.id)).rejects.toMatchObject({ status: 403, message: expect.stringContaining("ceilings") });

    await cast.h.ctx.mailer.settled();
    const mail = cast.h.smtp.messages.slice(mailsBefore).find((m) => m.subject.includes("Site ceilings lowered") && m.text.includes(`(id ${v2.id})`));
    expect(mail).toBeDefined();
    expect(mail!.to).toEqual(expect.arrayContaining([cast.team.engineer.email, cast.team.engineer2.email]));
    // Since issue 13 the operator who can no longer drive it and the safety officers hear of it too (reconfirm.test.ts).
    expect(mail!.to).toContain(cast.team.operator.email);

    // Raising the ceilings again does not silently re-enable the flagged version.
    const raised = await setCeilings(original, "back to the site defaults");
    expect(raised.flaggedVersionIds).toContain(v2.id);
    const stillFlagged = await call(cast.h, "get", `/api/profiles/${profile.id}`, cast.team.operator.cookie);
    expect(stillFlagged.body.profile.driveableVersionId).toBeNull();
    const flags = await call(cast.h, "get", `/api/audit?entity=version&actorId=${cast.team.officer.id}`, await signIn(cast.h, "sigrid"));
    const actions = flags.body.entries.filter((e: { entityId: string }) => e.entityId === String(v2.id)).map((e: { action: string }) => e.action);
    expect(actions).toContain("flag");
    expect(actions).not.toContain("unflag");

    // A compliant version approved deliberately is what makes the profile driveable again.
    const v3 = (await call(cast.h, "post", `/api/profiles/${profile.id}/versions`, cast.team.engineer.cookie).send({ parentVersionId: v2.id, params: { ...params, watchdogMs: 250 } })).body.version;
    await call(cast.h, "post", `/api/versions/${v3.id}/submit`, cast.team.engineer.cookie).expect(200);
    await call(cast.h, "post", `/api/versions/${v3.id}/approve`, cast.team.officer.cookie).send({ comment: "watchdog shortened", paramsSha256: v3.paramsSha256 }).expect(200);
    const after = await call(cast.h, "get", `/api/profiles/${profile.id}`, cast.team.operator.cookie);
    expect(after.body.profile.driveableVersionId).toBe(v3.id);
    expect(after.body.versions.find((v: { id: number }) => v.id === v2.id).state).toBe("superseded");
  });

  it("a shorter stopping distance or a higher minimum deceleration flags approved versions above it, like any other ceiling", async () => {
    // 250 mm/s at 0.8 m/s²: 0.25²/(2·0.8) = 39 mm (v²/2a, derived): within the default 50 mm, above 35 mm.
    const params = { ...compliantParams(cast.arm), shaping: { ...compliantParams(cast.arm).shaping, linearAccelMPerS2: 0.8 } };
    const { version: byStop } = await approvedProfile(cast.h, cast.team, cast.arm, params);
    const { version: byDecel } = await approvedProfile(cast.h, cast.team, cast.arm, params);
    try {
      const shorter = await setCeilings({ ...original, stoppingDistanceMaxM: 0.035 }, "shorter stops for the new fixture");
      expect(shorter.flaggedVersionIds).toContain(byStop.id);
      const operator = (await findUserById(cast.h.db, cast.team.operator.id))!;
      await expect(loadVersionForDriving(cast.h.db, operator, byStop.id)).rejects.toMatchObject({ status: 403, message: expect.stringContaining("ceilings") });
      await setCeilings(original);
      // byDecel was flagged too by the shorter stop; a fresh one shows the deceleration minimum on its own.
      const { version: fresh } = await approvedProfile(cast.h, cast.team, cast.arm, params);
      const firmer = await setCeilings({ ...original, decelerationMinMPerS2: 0.9 }, "firmer ramps");
      expect(firmer.flaggedVersionIds).toEqual(expect.arrayContaining([byDecel.id, fresh.id]));
      const flags = await call(cast.h, "get", `/api/audit?entity=version&actorId=${cast.team.officer.id}`, await signIn(cast.h, "sigrid"));
      const summary = flags.body.entries.find((e: { entityId: string; action: string }) => e.entityId === String(fresh.id) && e.action === "flag")?.summary;
      // Named as people read it (issue 13, item 9: field labels, never the code).
      expect(summary).toContain("Linear acceleration limit");
      expect(summary).not.toContain("shaping.linearAccelMPerS2");
    } finally {
      await setCeilings(original);
    }
  });

  it("a submitted version that a lowered ceiling now exceeds cannot be approved", async () => {
    const profile = await createProfile(cast.h, cast.team, cast.arm, { ...compliantParams(cast.arm), watchdogMs: 295 });
    const v = profile.latestVersion;
    await call(cast.h, "post", `/api/versions/${v.id}/submit`, cast.team.engineer.cookie).expect(200);
    await setCeilings({ ...original, watchdogMaxMs: 290 });
    try {
      const res = await call(cast.h, "post", `/api/versions/${v.id}/approve`, cast.team.officer.cookie).send({ comment: "looks fine", paramsSha256: v.paramsSha256 });
      expect(res.status).toBe(422);
      expect(res.body.error.code).toBe("ceiling_exceeded");
      expect(res.body.error.issues).toEqual([{ path: "watchdogMs", message: expect.stringContaining("Input watchdog, at most") }]);
      expect((await call(cast.h, "get", `/api/versions/${v.id}`, cast.team.officer.cookie)).body.version.state).toBe("submitted");
    } finally {
      await setCeilings(original);
    }
  });
});
