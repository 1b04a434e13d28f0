import { json, NULLABLE, primaryKey, text, unsigned, userRef } from "../columns.ts";
import { addForeignKeys, schemaStep, timeNow } from "./columns.ts";

/**
 * Site ceilings, one row per revision (history kept; the highest revision is in force). Revision 1 is
 * the default set: TCP linear speed 250 mm/s, the manual reduced-speed limit of ISO 10218-1:2011 (that
 * edition was replaced in February 2025 by ISO 10218-1:2025; clause numbers from memory) — the values are
 * written out here so this migration never changes when the shared defaults do. Later ceilings
 * (stoppingDistanceMaxM, decelerationMinMPerS2) are absent from this row and parse with their defaults.
 */
const REVISION_1 = {
  tcpLinearMaxMPerS: 0.25,
  tcpAngularMaxRadPerS: Math.PI / 2,
  jointSpeedFractionMax: 0.75,
  watchdogMaxMs: 300,
  allowedGuardPolicies: ["damp-through", "stop-before"],
  lambdaMaxMinM: 0.01,
};

export const up = schemaStep(async (qi) => {
  await qi.createTable("site_ceilings", {
    revision: primaryKey(unsigned()),
    ceilings: json(),
    note: text(),
    updated_by: userRef(NULLABLE),
    updated_at: timeNow(),
  });
  await addForeignKeys(qi, "site_ceilings", { updated_by: "users" });
  await qi.bulkInsert("site_ceilings", [{ revision: 1, ceilings: JSON.stringify(REVISION_1), note: "site defaults (ISO 10218-1 reduced speed)" }]);
});

export const down = schemaStep((qi) => qi.dropTable("site_ceilings"));
