import type { MigrationFn } from "umzug";
import { DataTypes, type Sequelize } from "sequelize";
import { addForeignKey, NOW, NOW_ON_UPDATE, refuseRowsWhen } from "./columns.ts";

/**
 * Rate profiles and their versions. A version's content is immutable from the moment it is written:
 * the BEFORE UPDATE trigger allows exactly one change, setting locked_at from NULL (the approval), and
 * refuses everything once locked_at is set; the BEFORE DELETE trigger refuses deleting a locked row.
 * The lifecycle state lives in version_status, so moving a version through its states never touches
 * the locked row. No ON DELETE CASCADE here: MariaDB does not fire triggers for cascaded deletes.
 * The triggers are SQL: queryInterface's createTrigger exists for PostgreSQL only.
 */
export const up: MigrationFn<Sequelize> = async ({ context: db }) => {
  const qi = db.getQueryInterface();
  await qi.createTable("profiles", {
    id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, autoIncrement: true, primaryKey: true },
    name: { type: DataTypes.STRING(120), allowNull: false },
    operator_id: { type: DataTypes.STRING(40), allowNull: false },
    arm_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    created_by: { type: DataTypes.STRING(40), allowNull: false },
    created_at: { type: DataTypes.DATE(3), allowNull: false, defaultValue: NOW },
  });
  await qi.addIndex("profiles", ["operator_id"], { name: "profiles_operator" });
  await addForeignKey(qi, "profiles", "profiles_operator_fk", "operator_id", "users");
  await addForeignKey(qi, "profiles", "profiles_arm_fk", "arm_id", "arms");
  await addForeignKey(qi, "profiles", "profiles_created_by_fk", "created_by", "users");

  await qi.createTable("profile_versions", {
    id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, autoIncrement: true, primaryKey: true },
    profile_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    number: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    parent_version_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
    params: { type: DataTypes.JSON, allowNull: false },
    params_sha256: { type: DataTypes.CHAR(64), allowNull: false },
    note: { type: DataTypes.TEXT, allowNull: false },
    author_id: { type: DataTypes.STRING(40), allowNull: false },
    created_at: { type: DataTypes.DATE(3), allowNull: false, defaultValue: NOW },
    locked_at: { type: DataTypes.DATE(3), allowNull: true },
  });
  await qi.addConstraint("profile_versions", { type: "unique", name: "profile_versions_number_unique", fields: ["profile_id", "number"] });
  await addForeignKey(qi, "profile_versions", "profile_versions_profile_fk", "profile_id", "profiles");
  await addForeignKey(qi, "profile_versions", "profile_versions_parent_fk", "parent_version_id", "profile_versions");
  await addForeignKey(qi, "profile_versions", "profile_versions_author_fk", "author_id", "users");
  await db.query(`
    CREATE TRIGGER profile_versions_before_update BEFORE UPDATE ON profile_versions FOR EACH ROW
    BEGIN
      IF OLD.locked_at IS NOT NULL THEN
        SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = 'profile version is locked (approved): it cannot be changed';
      END IF;
      IF NOT (NEW.id <=> OLD.id AND NEW.profile_id <=> OLD.profile_id AND NEW.number <=> OLD.number
              AND NEW.parent_version_id <=> OLD.parent_version_id AND NEW.params <=> OLD.params
              AND NEW.params_sha256 <=> OLD.params_sha256 AND NEW.note <=> OLD.note
              AND NEW.author_id <=> OLD.author_id AND NEW.created_at <=> OLD.created_at) THEN
        SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = 'profile versions are immutable: save a new version instead';
      END IF;
    END`);
  await refuseRowsWhen(qi, "profile_versions_before_delete", "BEFORE DELETE", "profile_versions", "OLD.locked_at IS NOT NULL", "profile version is locked (approved): it cannot be deleted");

  await qi.createTable("version_status", {
    version_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, primaryKey: true },
    state: {
      type: DataTypes.ENUM("draft", "submitted", "approved", "rejected", "superseded", "retired"),
      allowNull: false,
      defaultValue: "draft",
    },
    submitted_at: { type: DataTypes.DATE(3), allowNull: true },
    decided_by: { type: DataTypes.STRING(40), allowNull: true },
    decided_at: { type: DataTypes.DATE(3), allowNull: true },
    decision_comment: { type: DataTypes.TEXT, allowNull: true },
    exceeds_ceilings: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false },
    updated_at: { type: DataTypes.DATE(3), allowNull: false, defaultValue: NOW_ON_UPDATE },
  });
  await qi.addIndex("version_status", ["state"], { name: "version_status_state" });
  await addForeignKey(qi, "version_status", "version_status_version_fk", "version_id", "profile_versions");
  await addForeignKey(qi, "version_status", "version_status_decided_by_fk", "decided_by", "users");
};

export const down: MigrationFn<Sequelize> = async ({ context: db }) => {
  const qi = db.getQueryInterface();
  await qi.dropTable("version_status");
  await qi.dropTable("profile_versions");
  await qi.dropTable("profiles");
};
