import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { QueryTypes } from "sequelize";
import { BUILTIN_TRIAL_KINDS, checkCeilings, type ProfileParams } from "@jogwright/shared";
import { call, createHarness, freshUser, signIn, type Harness } from "../test/harness.ts";
import { findArm } from "../modules/arms/service.ts";
import { findCeilingsInForce, ratedJointSpeeds, updateCeilings } from "../modules/ceilings/service.ts";
import { modelsOf } from "./models.ts";
import { paramsSha256 } from "../modules/versions/service.ts";
import { seedDemo } from "./seed.ts";
import { DEMO_PROFILE_CAST, seedDemoProfiles, type DemoProfileCast } from "./seed-profiles.ts";

/**
 * The demo seed on this file's own freshly seeded database (src/test/fresh-database.ts): seeding again
 * changes nothing, and the seed's demo profiles, written again for a cast of new accounts and profile
 * names, come out exactly as the seed means them (locked, approved, hashed, driveable).
 */
let h: Harness;
beforeAll(() => {
  h = createHarness({ SIGN_IN_MAX_FAILURES: "1000" });
});
afterAll(() => h.close());

interface VersionRow {
  id: number;
  number: number;
  params: string | ProfileParams;
  params_sha256: string;
  locked_at: Date | null;
  state: string;
  exceeds_ceilings: number;
  approver_id: string | null;
  approval_sha: string | null;
  approved_at: Date | null;
}

/** Every version of one profile with its status and its approvals row, if any, oldest first. */
async function versionRows(profileName: string, operatorUsername: string): Promise<VersionRow[]> {
  return h.db.query<VersionRow>(
    `SELECT v.id, v.number, v.params, v.params_sha256, v.locked_at, s.state, s.exceeds_ceilings,
            ap.approver_id, ap.params_sha256 AS approval_sha, ap.approved_at
     FROM profiles p JOIN users u ON u.id = p.operator_id
     JOIN profile_versions v ON v.profile_id = p.id
     JOIN version_status s ON s.version_id = v.id
     LEFT JOIN approvals ap ON ap.version_id = v.id
     WHERE p.name = ? AND u.username = ?
     ORDER BY v.number`,
    { replacements: [profileName, operatorUsername], type: QueryTypes.SELECT },
  );
}

const paramsOf = (row: VersionRow): ProfileParams => (typeof row.params === "string" ? JSON.parse(row.params) : row.params);

/** New accounts and profile names for the demo's profiles, seeded: what it checks no other test can have moved on. */
async function seedFreshCast() {
  const people = {
    packOperator: await freshUser(h, ["operator"]),
    coverOperator: await freshUser(h, ["operator"]),
    engineer: await freshUser(h, ["engineer"]),
    safetyOfficer: await freshUser(h, ["safety_officer"]),
  };
  const suffix = people.packOperator.username;
  const cast: DemoProfileCast = {
    packOperator: people.packOperator.username,
    coverOperator: people.coverOperator.username,
    engineer: people.engineer.username,
    safetyOfficer: people.safetyOfficer.username,
    packProfileName: `Pack opening ${suffix}`,
    coverProfileName: `Cover plates ${suffix}`,
  };
  await seedDemoProfiles(h.db, cast);
  return { cast, people };
}

describe("the demo seed", () => {
  it("runs again without error and without duplicating anything; the demo's approved version stays locked with its approval", async () => {
    const count = async () =>
      Number(
        (
          await h.db.query<{ n: number | bigint }>("SELECT COUNT(*) AS n FROM profiles WHERE name IN (?, ?)", {
            replacements: [DEMO_PROFILE_CAST.packProfileName, DEMO_PROFILE_CAST.coverProfileName],
            type: QueryTypes.SELECT,
          })
        )[0]!.n,
      );
    const before = await versionRows(DEMO_PROFILE_CAST.packProfileName, DEMO_PROFILE_CAST.packOperator);
    await seedDemo(h.db);
    await seedDemo(h.db);
    expect(await count()).toBe(2);
    const after = await versionRows(DEMO_PROFILE_CAST.packProfileName, DEMO_PROFILE_CAST.packOperator);
    // Version rows 1 and 2 are the seed's own; the triggers keep a locked row and its approval as they are.
    const seeded = (rows: VersionRow[]) => rows.filter((r) => r.number <= 2).map(({ id, number, params_sha256, locked_at, approver_id, approval_sha, approved_at }) => ({ id, number, params_sha256, locked_at, approver_id, approval_sha, approved_at }));
    expect(seeded(after)).toEqual(seeded(before));
    const v1 = after.find((r) => r.number === 1)!;
    expect(v1.locked_at).not.toBeNull();
    expect(v1.approval_sha).toBe(v1.params_sha256);
  });

  describe("for a fresh cast that only this test knows", () => {
    let cast: DemoProfileCast;
    let people: Record<"packOperator" | "coverOperator" | "engineer" | "safetyOfficer", Awaited<ReturnType<typeof freshUser>>>;
    beforeAll(async () => {
      ({ cast, people } = await seedFreshCast());
    });

    it("version 1 is locked: locked_at set to its approval's time, one approvals row by the safety officer, and every hash equals the SHA-256 of the stored parameters", async () => {
      const [v1, v2, ...more] = await versionRows(cast.packProfileName, cast.packOperator);
      expect(more).toEqual([]);
      expect(v1).toMatchObject({ number: 1, state: "approved", approver_id: people.safetyOfficer.user.id });
      expect(v1!.locked_at).not.toBeNull();
      // Migration 0014: inserting the approvals row locks the version at the approval's time.
      expect(v1!.locked_at).toEqual(v1!.approved_at);
      expect(v1!.params_sha256).toBe(paramsSha256(paramsOf(v1!)));
      expect(v1!.approval_sha).toBe(v1!.params_sha256);
      // Version 2 waits for review: submitted, not locked, no approval.
      expect(v2).toMatchObject({ number: 2, state: "submitted", locked_at: null, approver_id: null });
      expect(v2!.params_sha256).toBe(paramsSha256(paramsOf(v2!)));
    });

    it("the operator can drive version 1, written by the engineer and approved by the safety officer, unless the ceilings in force flag it; version 2 awaits review", async () => {
      const cookie = await signIn(h, people.packOperator.username, people.packOperator.password);
      const list = await call(h, "get", "/api/profiles", cookie);
      const profile = list.body.profiles.find((p: { name: string }) => p.name === cast.packProfileName);
      expect(profile).toBeDefined();
      const detail = await call(h, "get", `/api/profiles/${profile.id}`, cookie);
      const [v2, v1] = detail.body.versions;
      // The seed flags version 1 from the ceilings in force, as the ceilings service would (derived).
      const arm = (await findArm(h.db, detail.body.profile.armId))!;
      const flagged = checkCeilings(v1.params, (await findCeilingsInForce(h.db)).ceilings, ratedJointSpeeds(arm)).length > 0;
      expect(v1).toMatchObject({ number: 1, state: "approved", exceedsCeilings: flagged, authorName: people.engineer.user.displayName, decidedByName: people.safetyOfficer.user.displayName });
      expect(v2).toMatchObject({ number: 2, state: "submitted", parentVersionId: v1.id, authorName: people.engineer.user.displayName });
      expect(detail.body.profile.driveableVersionId).toBe(flagged ? null : v1.id);
      const review = await call(h, "get", `/api/versions/${v1.id}`, cookie);
      expect(review.body.approval).toMatchObject({ approverName: people.safetyOfficer.user.displayName, paramsSha256: v1.paramsSha256 });
      expect(review.body.violations.length > 0).toBe(flagged);
    });

    it("both submitted versions carry the arm's seven built-in trials as evidence, run with their own parameters", async () => {
      const [v1, v2] = await versionRows(cast.packProfileName, cast.packOperator);
      for (const v of [v1!, v2!]) {
        const runs = await h.db.query<{ trial_kind: string; params: unknown; version_id: number }>(
          "SELECT r.trial_kind, r.params, r.version_id FROM version_evidence e JOIN trial_runs r ON r.id = e.run_id WHERE e.version_id = ?",
          { replacements: [v.id], type: QueryTypes.SELECT },
        );
        expect(runs.map((r) => r.trial_kind).sort(), `v${v.number}`).toEqual([...BUILTIN_TRIAL_KINDS].sort());
        for (const r of runs) expect(typeof r.params === "string" ? JSON.parse(r.params) : r.params).toEqual(paramsOf(v));
      }
    });

    it("every profile uses the stop-before guard, and the seven-axis one is a draft with the null-space term on", async () => {
      const pack = await versionRows(cast.packProfileName, cast.packOperator);
      const cover = await versionRows(cast.coverProfileName, cast.coverOperator);
      for (const v of [...pack, ...cover]) expect(paramsOf(v).guard.policy, `v${v.number}`).toBe("stop-before");
      expect(cover).toHaveLength(1);
      expect(cover[0]).toMatchObject({ number: 1, state: "draft", locked_at: null, approver_id: null });
      expect(paramsOf(cover[0]!).nullSpace.enabled).toBe(true);
    });

    it("seeding the same cast again writes nothing", async () => {
      const before = [...(await versionRows(cast.packProfileName, cast.packOperator)), ...(await versionRows(cast.coverProfileName, cast.coverOperator))];
      await seedDemoProfiles(h.db, cast);
      const after = [...(await versionRows(cast.packProfileName, cast.packOperator)), ...(await versionRows(cast.coverProfileName, cast.coverOperator))];
      expect(after).toEqual(before);
    });
  });

  // Last: it lowers the ceilings of this file's database.
  describe("for a fresh cast seeded under ceilings its version 1 exceeds", () => {
    it("flags version 1 as a ceilings change would: the flag, a row in its flag history and an audit entry", async () => {
      const officer = await freshUser(h, ["safety_officer"]);
      const current = await findCeilingsInForce(h.db);
      await updateCeilings(h.ctx, officer.user, { revision: current.revision, ceilings: { ...current.ceilings, tcpLinearMaxMPerS: 0.2 }, note: "seed test: lowered" });
      const { cast } = await seedFreshCast();
      const [v1] = await versionRows(cast.packProfileName, cast.packOperator);
      expect(v1).toMatchObject({ state: "approved", exceeds_ceilings: 1 });
      const { CeilingEvent, AuditEntry } = modelsOf(h.db);
      const events = await CeilingEvent.findAll({ where: { versionId: v1!.id } });
      expect(events.map((e) => [e.kind, e.ceilingsRevision])).toEqual([["flag", current.revision + 1]]);
      expect(events[0]!.comment).toContain("TCP linear cap 250 mm/s exceeds the site ceiling of 200 mm/s");
      expect(await AuditEntry.count({ where: { entity: "version", entityId: String(v1!.id), action: "flag" } })).toBe(1);
    });
  });
});
