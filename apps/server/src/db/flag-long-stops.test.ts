import { describe, expect, it } from "vitest";
import { QueryTypes } from "sequelize";
import { createHarness } from "../test/harness.ts";
import { approveInDatabase, compliantParams, teamForFile, uniqueName } from "../test/profiles-fixture.ts";
import { createProfile, findVersion } from "../modules/versions/service.ts";
import { up as flagLongStops } from "./migrations/0013-flag-long-stops.ts";

/**
 * Migration 0013: versions approved before the stopping-distance and deceleration ceilings existed are
 * re-checked once against them, as a lowered ceiling would have re-checked them.
 */
const cast = teamForFile(createHarness);

/** A version approved as an older server would have approved it (no stop ceilings then). */
async function approvedBeforeTheStopCeilings(linearAccelMPerS2: number): Promise<number> {
  const params = { ...compliantParams(cast.arm), shaping: { ...compliantParams(cast.arm).shaping, linearAccelMPerS2 } };
  const profile = await createProfile(cast.h.ctx, cast.team.engineer, { name: uniqueName("old approval"), operatorId: cast.team.operator.id, armId: cast.arm.id, params, note: "" });
  const id = profile.latestVersion.id;
  await approveInDatabase(cast.h, id, cast.team.officer.id);
  return id;
}

describe("migration 0013", () => {
  it("flags an approved version whose stop from its top speed is longer than 50 mm or whose deceleration is below 0.5 m/s², and audits it; a compliant one is left alone", async () => {
    // 250 mm/s at 0.1 m/s²: 312 mm and below 0.5 m/s²; at 0.6 m/s²: 52 mm; at 1 m/s²: 31 mm (v²/2a, derived).
    const slow = await approvedBeforeTheStopCeilings(0.1);
    const long = await approvedBeforeTheStopCeilings(0.6);
    const fine = await approvedBeforeTheStopCeilings(1.0);
    await flagLongStops({ context: cast.h.db, name: "0013-flag-long-stops", path: undefined });
    expect((await findVersion(cast.h.db, slow))!.exceedsCeilings).toBe(true);
    expect((await findVersion(cast.h.db, long))!.exceedsCeilings).toBe(true);
    expect((await findVersion(cast.h.db, fine))!.exceedsCeilings).toBe(false);
    const audits = await cast.h.db.query<{ entity_id: string; summary: string }>(
      "SELECT entity_id, summary FROM audit_log WHERE entity = 'version' AND action = 'flag' AND entity_id IN (?)",
      { replacements: [[String(slow), String(long), String(fine)]], type: QueryTypes.SELECT },
    );
    expect(audits.map((a) => a.entity_id).sort()).toEqual([String(slow), String(long)].sort());
    expect(audits.find((a) => a.entity_id === String(slow))!.summary).toContain("decelerationMinMPerS2, stoppingDistanceMaxM");
    expect(audits.find((a) => a.entity_id === String(long))!.summary).toContain("stoppingDistanceMaxM");
  });
});
