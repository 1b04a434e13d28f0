import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { QueryTypes } from "sequelize";
import type { Arm, User } from "@jogwright/shared";
import { createHarness, freshUser, type Harness } from "../test/harness.ts";
import { approveInDatabase, compliantParams, sixAxisArm, uniqueName } from "../test/profiles-fixture.ts";
import { createProfile, findVersion } from "../modules/versions/service.ts";
import { up as flagLongStops } from "./migrations/0013-flag-long-stops.ts";

/**
 * Migration 0013: versions approved before the stopping-distance and deceleration ceilings existed are
 * re-checked once against them, as a lowered ceiling would have re-checked them.
 */
let h: Harness;
let arm: Arm;
let engineer: User;
let operator: User;
let officer: User;
beforeAll(async () => {
  h = createHarness();
  arm = await sixAxisArm(h);
  engineer = (await freshUser(h, ["engineer"])).user;
  operator = (await freshUser(h, ["operator"])).user;
  officer = (await freshUser(h, ["safety_officer"])).user;
});
afterAll(async () => {
  await h.db.query("UPDATE users SET is_active = 0 WHERE id IN (?)", { replacements: [[engineer.id, operator.id, officer.id]] });
  await h.close();
});

/** A version approved as an older server would have approved it (no stop ceilings then). */
async function approvedBeforeTheStopCeilings(linearAccelMPerS2: number): Promise<number> {
  const params = { ...compliantParams(arm), shaping: { ...compliantParams(arm).shaping, linearAccelMPerS2 } };
  const profile = await createProfile(h.ctx, engineer, { name: uniqueName("old approval"), operatorId: operator.id, armId: arm.id, params, note: "" });
  const id = profile.latestVersion.id;
  await approveInDatabase(h, id, officer.id);
  return id;
}

describe("migration 0013", () => {
  it("flags an approved version whose stop from its top speed is longer than 50 mm or whose deceleration is below 0.5 m/s², and audits it; a compliant one is left alone", async () => {
    // 250 mm/s at 0.1 m/s²: 312 mm and below 0.5 m/s²; at 0.6 m/s²: 52 mm; at 1 m/s²: 31 mm (v²/2a, derived).
    const slow = await approvedBeforeTheStopCeilings(0.1);
    const long = await approvedBeforeTheStopCeilings(0.6);
    const fine = await approvedBeforeTheStopCeilings(1.0);
    await flagLongStops({ context: h.db, name: "0013-flag-long-stops", path: undefined });
    expect((await findVersion(h.db, slow))!.exceedsCeilings).toBe(true);
    expect((await findVersion(h.db, long))!.exceedsCeilings).toBe(true);
    expect((await findVersion(h.db, fine))!.exceedsCeilings).toBe(false);
    const audits = await h.db.query<{ entity_id: string; summary: string }>(
      "SELECT entity_id, summary FROM audit_log WHERE entity = 'version' AND action = 'flag' AND entity_id IN (?)",
      { replacements: [[String(slow), String(long), String(fine)]], type: QueryTypes.SELECT },
    );
    expect(audits.map((a) => a.entity_id).sort()).toEqual([String(slow), String(long)].sort());
    expect(audits.find((a) => a.entity_id === String(slow))!.summary).toContain("decelerationMinMPerS2, stoppingDistanceMaxM");
    expect(audits.find((a) => a.entity_id === String(long))!.summary).toContain("stoppingDistanceMaxM");
  });
});
