import type { MigrationFn } from "umzug";
import { DataTypes, type Sequelize } from "sequelize";
import { addForeignKey } from "./columns.ts";

/**
 * Recordings of live jog sessions: one row per session (who, arm, profile version, start/end, why it
 * ended, summary statistics) and its state samples at frame rate in chunks of about one second, written
 * by the buffered recording writer (modules/recordings/writer.ts) so the tick never waits on the database.
 * No foreign key to profile_versions' lifecycle: a recording outlives retirement of its version.
 *
 * Two columns carry their own column CHECK, which no queryInterface option writes, so their type is given
 * as SQL text: `summary` spells out "NULL or valid JSON" (what MariaDB's own JSON check means too), and
 * `frames` is plain LONGTEXT (utf8mb4_unicode_ci, not JSON's utf8mb4_bin) checked as JSON — the writer
 * joins frame JSON it already has into the array text, and nothing ever queries inside it.
 */
export const up: MigrationFn<Sequelize> = async ({ context: db }) => {
  const qi = db.getQueryInterface();
  await qi.createTable("jog_recordings", {
    id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, autoIncrement: true, primaryKey: true },
    session_id: { type: DataTypes.STRING(64), allowNull: false },
    driver_id: { type: DataTypes.STRING(40), allowNull: false },
    arm_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    profile_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    version_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    started_at: { type: DataTypes.DATE(3), allowNull: false },
    ended_at: { type: DataTypes.DATE(3), allowNull: true },
    end_reason: { type: DataTypes.STRING(60), allowNull: true },
    summary: { type: "JSON CHECK (summary IS NULL OR JSON_VALID(summary))", allowNull: true },
  });
  await qi.addConstraint("jog_recordings", { type: "unique", name: "jog_recordings_session_unique", fields: ["session_id"] });
  await qi.addIndex("jog_recordings", ["driver_id", "started_at"], { name: "jog_recordings_driver" });
  await qi.addIndex("jog_recordings", ["started_at"], { name: "jog_recordings_started" });
  await addForeignKey(qi, "jog_recordings", "jog_recordings_driver_fk", "driver_id", "users");
  await addForeignKey(qi, "jog_recordings", "jog_recordings_arm_fk", "arm_id", "arms");
  await addForeignKey(qi, "jog_recordings", "jog_recordings_profile_fk", "profile_id", "profiles");
  await addForeignKey(qi, "jog_recordings", "jog_recordings_version_fk", "version_id", "profile_versions");

  await qi.createTable("jog_recording_chunks", {
    recording_id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, primaryKey: true },
    chunk_index: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, primaryKey: true },
    frame_count: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    // NOT NULL inside the text: MariaDB wants it before the CHECK, and Sequelize appends allowNull's after.
    frames: { type: "LONGTEXT NOT NULL CHECK (JSON_VALID(frames))" },
  });
  await addForeignKey(qi, "jog_recording_chunks", "jog_recording_chunks_recording_fk", "recording_id", "jog_recordings", { onDelete: "CASCADE" });
};

export const down: MigrationFn<Sequelize> = async ({ context: db }) => {
  const qi = db.getQueryInterface();
  await qi.dropTable("jog_recording_chunks");
  await qi.dropTable("jog_recordings");
};
