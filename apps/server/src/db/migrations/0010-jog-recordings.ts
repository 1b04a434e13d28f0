import { NULLABLE, primaryKey, serialId, string, time, unsigned, userRef } from "../columns.ts";
import { addForeignKeys, schemaStep } from "./columns.ts";

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
export const up = schemaStep(async (qi) => {
  await qi.createTable("jog_recordings", {
    id: serialId(),
    session_id: string(64),
    // Who drove what (the foreign keys below): the driver, the arm, the profile and its version.
    driver_id: userRef(), arm_id: unsigned(), profile_id: unsigned(), version_id: unsigned(),
    started_at: time(),
    ended_at: time(NULLABLE),
    end_reason: string(60, NULLABLE),
    summary: { type: "JSON CHECK (summary IS NULL OR JSON_VALID(summary))", allowNull: true },
  });
  await qi.addConstraint("jog_recordings", { type: "unique", name: "jog_recordings_session_unique", fields: ["session_id"] });
  await qi.addIndex("jog_recordings", ["driver_id", "started_at"], { name: "jog_recordings_driver" });
  await qi.addIndex("jog_recordings", ["started_at"], { name: "jog_recordings_started" });
  await addForeignKeys(qi, "jog_recordings", { driver_id: "users", arm_id: "arms", profile_id: "profiles", version_id: "profile_versions" });

  await qi.createTable("jog_recording_chunks", {
    recording_id: primaryKey(unsigned()),
    chunk_index: primaryKey(unsigned()),
    frame_count: unsigned(),
    // NOT NULL inside the text: MariaDB wants it before the CHECK, and Sequelize appends allowNull's after.
    frames: { type: "LONGTEXT NOT NULL CHECK (JSON_VALID(frames))" },
  });
  await addForeignKeys(qi, "jog_recording_chunks", { recording_id: "jog_recordings" }, { onDelete: "CASCADE" });
});

export const down = schemaStep(async (qi) => {
  await qi.dropTable("jog_recording_chunks");
  await qi.dropTable("jog_recordings");
});
