import type { MigrationFn } from "umzug";
import { DataTypes, type Sequelize } from "sequelize";
import { addForeignKey, NOW, NOW_ON_UPDATE, refuseEveryRow, refuseRowsWhen } from "./columns.ts";

/**
 * The tuning bench (issue 10):
 * - `trials`: engineers' custom trials of an arm (the built-in ones are generated from the arm, not stored);
 * - `trial_runs`: one offline run of a trial (built-in, custom, or a recorded session's operator input) with
 *   a profile version's parameters — or unsaved edits, then version_id is NULL and `params` says what ran.
 *   Its metrics (JSON), its time series (compressed binary, modules/trials/series-codec.ts) and the SHA-256
 *   of the series (a run is deterministic: the same version and trial give the same hash). Runs are never
 *   changed: a trigger refuses UPDATE; DELETE stays possible for drafts' runs (the runtime account has no
 *   DELETE grant on this table, so in practice nobody deletes them).
 * - `version_evidence`: the runs a version was submitted with. Fixed once the version leaves draft: a
 *   trigger refuses INSERT and DELETE unless the version is a draft (the service attaches the runs and
 *   submits in one transaction, attaching first).
 * - `audit_log.entity` gains "trial" (an engineer's custom trial is created and changed on the record).
 * Triggers are SQL: queryInterface's createTrigger exists for PostgreSQL only.
 */
const ENTITIES = ["user", "arm", "profile", "version", "ceilings", "approval", "session"];

export const up: MigrationFn<Sequelize> = async ({ context: db }) => {
  const qi = db.getQueryInterface();
  // Custom trials are audited: the trail names a new entity.
  await qi.changeColumn("audit_log", "entity", { type: DataTypes.ENUM(...ENTITIES, "trial"), allowNull: false });
  await qi.createTable("trials", {
    id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, autoIncrement: true, primaryKey: true },
    arm_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    name: { type: DataTypes.STRING(120), allowNull: false },
    definition: { type: DataTypes.JSON, allowNull: false },
    created_by: { type: DataTypes.STRING(40), allowNull: false },
    created_at: { type: DataTypes.DATE(3), allowNull: false, defaultValue: NOW },
    updated_at: { type: DataTypes.DATE(3), allowNull: false, defaultValue: NOW_ON_UPDATE },
  });
  await qi.addConstraint("trials", { type: "unique", name: "trials_arm_name_unique", fields: ["arm_id", "name"] });
  await addForeignKey(qi, "trials", "trials_arm_fk", "arm_id", "arms");
  await addForeignKey(qi, "trials", "trials_created_by_fk", "created_by", "users");

  await qi.createTable("trial_runs", {
    id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, autoIncrement: true, primaryKey: true },
    arm_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    profile_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    version_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
    params: { type: DataTypes.JSON, allowNull: false },
    /** A built-in kind, "custom" or "replay". */
    trial_kind: { type: DataTypes.STRING(40), allowNull: false },
    trial_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
    recording_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
    trial_name: { type: DataTypes.STRING(160), allowNull: false },
    trial_definition: { type: DataTypes.JSON, allowNull: true },
    metrics: { type: DataTypes.JSON, allowNull: false },
    series: { type: DataTypes.BLOB("long"), allowNull: false },
    series_hash: { type: DataTypes.CHAR(64), allowNull: false },
    duration_ms: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    created_by: { type: DataTypes.STRING(40), allowNull: false },
    created_at: { type: DataTypes.DATE(3), allowNull: false, defaultValue: NOW },
  });
  await qi.addIndex("trial_runs", ["version_id", "created_at"], { name: "trial_runs_version" });
  await qi.addIndex("trial_runs", ["profile_id", "created_at"], { name: "trial_runs_profile" });
  await addForeignKey(qi, "trial_runs", "trial_runs_arm_fk", "arm_id", "arms");
  await addForeignKey(qi, "trial_runs", "trial_runs_profile_fk", "profile_id", "profiles");
  await addForeignKey(qi, "trial_runs", "trial_runs_version_fk", "version_id", "profile_versions");
  await addForeignKey(qi, "trial_runs", "trial_runs_trial_fk", "trial_id", "trials");
  await addForeignKey(qi, "trial_runs", "trial_runs_recording_fk", "recording_id", "jog_recordings");
  await addForeignKey(qi, "trial_runs", "trial_runs_created_by_fk", "created_by", "users");

  await qi.createTable("version_evidence", {
    version_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, primaryKey: true },
    run_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, primaryKey: true },
    attached_by: { type: DataTypes.STRING(40), allowNull: false },
    attached_at: { type: DataTypes.DATE(3), allowNull: false, defaultValue: NOW },
  });
  await addForeignKey(qi, "version_evidence", "version_evidence_version_fk", "version_id", "profile_versions");
  await addForeignKey(qi, "version_evidence", "version_evidence_run_fk", "run_id", "trial_runs");
  await addForeignKey(qi, "version_evidence", "version_evidence_attached_by_fk", "attached_by", "users");

  await refuseEveryRow(qi, "trial_runs_before_update", "BEFORE UPDATE", "trial_runs", "a trial run is never changed");
  await db.query(`
    CREATE TRIGGER version_evidence_before_insert BEFORE INSERT ON version_evidence FOR EACH ROW
    BEGIN
      IF (SELECT state FROM version_status WHERE version_id = NEW.version_id) <> 'draft' THEN
        SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = 'evidence is attached to a draft only';
      END IF;
      IF (SELECT version_id FROM trial_runs WHERE id = NEW.run_id) IS NULL
         OR (SELECT version_id FROM trial_runs WHERE id = NEW.run_id) <> NEW.version_id THEN
        SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = 'evidence must be a run of the same version';
      END IF;
    END`);
  await refuseRowsWhen(
    qi,
    "version_evidence_before_delete",
    "BEFORE DELETE",
    "version_evidence",
    "(SELECT state FROM version_status WHERE version_id = OLD.version_id) <> 'draft'",
    "the evidence of a submitted version never changes",
  );
  await refuseEveryRow(qi, "version_evidence_before_update", "BEFORE UPDATE", "version_evidence", "evidence rows are never changed");
};

export const down: MigrationFn<Sequelize> = async ({ context: db }) => {
  const qi = db.getQueryInterface();
  for (const t of ["version_evidence_before_update", "version_evidence_before_delete", "version_evidence_before_insert", "trial_runs_before_update"]) {
    await db.query(`DROP TRIGGER IF EXISTS ${t}`);
  }
  await qi.dropTable("version_evidence");
  await qi.dropTable("trial_runs");
  await qi.dropTable("trials");
  await qi.changeColumn("audit_log", "entity", { type: DataTypes.ENUM(...ENTITIES), allowNull: false });
};
