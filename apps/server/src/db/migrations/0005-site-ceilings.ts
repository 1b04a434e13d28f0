import type { MigrationFn } from "umzug";
import { DataTypes, type Sequelize } from "sequelize";
import { addForeignKey, NOW } from "./columns.ts";

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
  const qi = db.getQueryInterface();
  await qi.createTable("site_ceilings", {
    revision: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, primaryKey: true },
    ceilings: { type: DataTypes.JSON, allowNull: false },
    note: { type: DataTypes.TEXT, allowNull: false },
    updated_by: { type: DataTypes.STRING(40), allowNull: true },
    updated_at: { type: DataTypes.DATE(3), allowNull: false, defaultValue: NOW },
  });
  await addForeignKey(qi, "site_ceilings", "site_ceilings_updated_by_fk", "updated_by", "users");
  await qi.bulkInsert("site_ceilings", [{ revision: 1, ceilings: JSON.stringify(REVISION_1), note: "site defaults (ISO 10218-1 reduced speed)" }]);
};

export const down: MigrationFn<Sequelize> = async ({ context: db }) => {
  await db.getQueryInterface().dropTable("site_ceilings");
};
