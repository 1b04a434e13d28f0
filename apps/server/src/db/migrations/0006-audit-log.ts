import type { MigrationFn } from "umzug";
import { DataTypes, type Sequelize } from "sequelize";
import { NOW, refuseEveryRow } from "./columns.ts";

/**
 * The append-only audit trail: who changed what and when, with the SHA-256 of the record's canonical
 * JSON before and after. Triggers refuse UPDATE and DELETE (SQL: queryInterface's createTrigger exists for
 * PostgreSQL only). actor_id has no foreign key on purpose: the trail must outlive whatever it mentions.
 */
export const up: MigrationFn<Sequelize> = async ({ context: db }) => {
  const qi = db.getQueryInterface();
  await qi.createTable("audit_log", {
    id: { type: DataTypes.BIGINT.UNSIGNED, allowNull: false, autoIncrement: true, primaryKey: true },
    at: { type: DataTypes.DATE(3), allowNull: false, defaultValue: NOW },
    actor_id: { type: DataTypes.STRING(40), allowNull: true },
    entity: { type: DataTypes.ENUM("user", "arm", "profile", "version", "ceilings", "approval", "session"), allowNull: false },
    entity_id: { type: DataTypes.STRING(64), allowNull: false },
    action: { type: DataTypes.STRING(60), allowNull: false },
    summary: { type: DataTypes.TEXT, allowNull: false },
    sha256_before: { type: DataTypes.CHAR(64), allowNull: true },
    sha256_after: { type: DataTypes.CHAR(64), allowNull: true },
  });
  await qi.addIndex("audit_log", ["at"], { name: "audit_log_at" });
  await qi.addIndex("audit_log", ["entity", "entity_id"], { name: "audit_log_entity" });
  await qi.addIndex("audit_log", ["actor_id", "at"], { name: "audit_log_actor" });
  await refuseEveryRow(qi, "audit_log_before_update", "BEFORE UPDATE", "audit_log", "the audit log is append-only: entries cannot be changed");
  await refuseEveryRow(qi, "audit_log_before_delete", "BEFORE DELETE", "audit_log", "the audit log is append-only: entries cannot be deleted");
};

export const down: MigrationFn<Sequelize> = async ({ context: db }) => {
  await db.getQueryInterface().dropTable("audit_log");
};
