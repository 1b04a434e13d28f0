import type { MigrationFn } from "umzug";
import { DataTypes, type Sequelize } from "sequelize";
import { addForeignKey, NOW, refuseEveryRow } from "./columns.ts";

/**
 * The record of each approval: who, when, the comment and the hash approved. Append-only (triggers; SQL,
 * since queryInterface's createTrigger exists for PostgreSQL only).
 */
export const up: MigrationFn<Sequelize> = async ({ context: db }) => {
  const qi = db.getQueryInterface();
  await qi.createTable("approvals", {
    id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, autoIncrement: true, primaryKey: true },
    version_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    approver_id: { type: DataTypes.STRING(40), allowNull: false },
    approved_at: { type: DataTypes.DATE(3), allowNull: false, defaultValue: NOW },
    comment: { type: DataTypes.TEXT, allowNull: false },
    params_sha256: { type: DataTypes.CHAR(64), allowNull: false },
  });
  await qi.addConstraint("approvals", { type: "unique", name: "approvals_version_unique", fields: ["version_id"] });
  await addForeignKey(qi, "approvals", "approvals_version_fk", "version_id", "profile_versions");
  await addForeignKey(qi, "approvals", "approvals_approver_fk", "approver_id", "users");
  await refuseEveryRow(qi, "approvals_before_update", "BEFORE UPDATE", "approvals", "approvals are append-only: they cannot be changed");
  await refuseEveryRow(qi, "approvals_before_delete", "BEFORE DELETE", "approvals", "approvals are append-only: they cannot be deleted");
};

export const down: MigrationFn<Sequelize> = async ({ context: db }) => {
  await db.getQueryInterface().dropTable("approvals");
};
