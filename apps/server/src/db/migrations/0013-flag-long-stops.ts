import type { MigrationFn } from "umzug";
import { QueryTypes, type Sequelize } from "sequelize";
import { schemaStep } from "./columns.ts";

/**
 * Two site ceilings arrived after versions were approved: the longest controlled stop from a version's top
 * TCP speed (v²/2a, default 50 mm, common practice, no source) and the smallest linear deceleration
 * (default 0.5 m/s², common practice, no source). A ceiling change re-checks approved versions, but this
 * code change is not a ceiling change: this migration does that re-check once, against the ceilings in
 * force, so an approved version above the new ceilings is flagged (not driveable until a compliant version
 * is approved) exactly as a lowered ceiling would have flagged it. The check is written out here, like the
 * values in 0005, so this migration never changes when the shared code does.
 */
const DEFAULT_STOPPING_DISTANCE_MAX_M = 0.05;
const DEFAULT_DECELERATION_MIN_M_PER_S2 = 0.5;

type Json = Record<string, unknown>;
const num = (v: unknown) => (typeof v === "number" && Number.isFinite(v) ? v : Number.NaN);
const parse = (v: unknown): Json => (typeof v === "string" ? JSON.parse(v) : (v as Json)) ?? {};

export const up = schemaStep(async (qi, db) => {
  await db.transaction(async (transaction) => {
    // The two reads are SQL: queryInterface's select takes one table without order or limit, and a
    // migration must not use the app's models (they change with the code; this migration must not).
    const ceilingRows = await db.query<{ revision: number; ceilings: unknown }>(
      "SELECT revision, ceilings FROM site_ceilings ORDER BY revision DESC LIMIT 1",
      { type: QueryTypes.SELECT, transaction },
    );
    if (!ceilingRows[0]) return;
    const ceilings = parse(ceilingRows[0].ceilings);
    const maxStopM = ceilings.stoppingDistanceMaxM === undefined ? DEFAULT_STOPPING_DISTANCE_MAX_M : num(ceilings.stoppingDistanceMaxM);
    const minDecel = ceilings.decelerationMinMPerS2 === undefined ? DEFAULT_DECELERATION_MIN_M_PER_S2 : num(ceilings.decelerationMinMPerS2);
    const versions = await db.query<{ id: number; params: unknown }>(
      `SELECT v.id, v.params FROM profile_versions v JOIN version_status s ON s.version_id = v.id
       WHERE s.state = 'approved' AND s.exceeds_ceilings = 0 FOR UPDATE`,
      { type: QueryTypes.SELECT, transaction },
    );
    for (const v of versions) {
      const params = parse(v.params);
      const shaping = (params.shaping ?? {}) as Json;
      const override = (params.speedOverride ?? {}) as Json;
      const decel = num(shaping.linearAccelMPerS2);
      const topSpeed = (num(params.tcpLinearCapMPerS) * num(override.maxPercent)) / 100;
      // v²/(2a), constant-deceleration kinematics (derived); NaN (an unreadable field) counts as a breach.
      const stopM = decel > 0 ? (topSpeed * topSpeed) / (2 * decel) : Infinity;
      const breaches: string[] = [];
      if (!(decel >= minDecel - 1e-12)) breaches.push("decelerationMinMPerS2");
      if (!(stopM <= maxStopM + 1e-12)) breaches.push("stoppingDistanceMaxM");
      if (breaches.length === 0) continue;
      await qi.bulkUpdate("version_status", { exceeds_ceilings: true }, { version_id: v.id }, { transaction });
      await qi.bulkInsert(
        "audit_log",
        [
          {
            actor_id: null,
            entity: "version",
            entity_id: String(v.id),
            action: "flag",
            summary: `version id ${v.id} exceeds ceilings revision ${ceilingRows[0].revision} under the new stop ceilings (${breaches.join(", ")}); not driveable until a compliant version is approved (migration 0013)`,
          },
        ],
        { transaction },
      );
    }
  });
});

/** Flags are sticky by design (trigger 0008): there is nothing to undo. */
export const down: MigrationFn<Sequelize> = async () => {};
