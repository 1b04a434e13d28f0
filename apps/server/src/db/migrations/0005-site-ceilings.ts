import type { MigrationFn } from "umzug";
import type { Sequelize } from "sequelize";

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

export const up: MigrationFn<Sequelize> = async ({ context: db }) => {
  await db.query(`
    CREATE TABLE site_ceilings (
      revision INT UNSIGNED NOT NULL PRIMARY KEY,
      ceilings JSON NOT NULL CHECK (JSON_VALID(ceilings)),
      note TEXT NOT NULL,
      updated_by VARCHAR(40) NULL,
      updated_at DATETIME(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
      CONSTRAINT site_ceilings_updated_by_fk FOREIGN KEY (updated_by) REFERENCES users (id)
    ) ENGINE=InnoDB`);
  await db.query("INSERT INTO site_ceilings (revision, ceilings, note) VALUES (1, ?, 'site defaults (ISO 10218-1 reduced speed)')", {
    replacements: [JSON.stringify(REVISION_1)],
  });
};

export const down: MigrationFn<Sequelize> = async ({ context: db }) => {
  await db.query("DROP TABLE IF EXISTS site_ceilings");
};
