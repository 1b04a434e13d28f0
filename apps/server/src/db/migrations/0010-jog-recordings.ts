import type { MigrationFn } from "umzug";
import type { Sequelize } from "sequelize";

/**
 * Recordings of live jog sessions: one row per session (who, arm, profile version, start/end, why it
 * ended, summary statistics) and its state samples at frame rate in chunks of about one second, written
 * by the buffered recording writer (modules/recordings/writer.ts) so the tick never waits on the database.
 * No foreign key to profile_versions' lifecycle: a recording outlives retirement of its version.
 */
export const up: MigrationFn<Sequelize> = async ({ context: db }) => {
  await db.query(`
    CREATE TABLE jog_recordings (
      id INT UNSIGNED NOT NULL AUTO_INCREMENT PRIMARY KEY,
      session_id VARCHAR(64) NOT NULL,
      driver_id VARCHAR(40) NOT NULL,
      arm_id INT UNSIGNED NOT NULL,
      profile_id INT UNSIGNED NOT NULL,
      version_id INT UNSIGNED NOT NULL,
      started_at DATETIME(3) NOT NULL,
      ended_at DATETIME(3) NULL,
      end_reason VARCHAR(60) NULL,
      summary JSON NULL CHECK (summary IS NULL OR JSON_VALID(summary)),
      UNIQUE KEY jog_recordings_session_unique (session_id),
      KEY jog_recordings_driver (driver_id, started_at),
      KEY jog_recordings_started (started_at),
      CONSTRAINT jog_recordings_driver_fk FOREIGN KEY (driver_id) REFERENCES users (id),
      CONSTRAINT jog_recordings_arm_fk FOREIGN KEY (arm_id) REFERENCES arms (id),
      CONSTRAINT jog_recordings_profile_fk FOREIGN KEY (profile_id) REFERENCES profiles (id),
      CONSTRAINT jog_recordings_version_fk FOREIGN KEY (version_id) REFERENCES profile_versions (id)
    ) ENGINE=InnoDB`);
  await db.query(`
    CREATE TABLE jog_recording_chunks (
      recording_id INT UNSIGNED NOT NULL,
      chunk_index INT UNSIGNED NOT NULL,
      frame_count INT UNSIGNED NOT NULL,
      frames LONGTEXT NOT NULL CHECK (JSON_VALID(frames)),
      PRIMARY KEY (recording_id, chunk_index),
      CONSTRAINT jog_recording_chunks_recording_fk FOREIGN KEY (recording_id) REFERENCES jog_recordings (id) ON DELETE CASCADE
    ) ENGINE=InnoDB`);
};

export const down: MigrationFn<Sequelize> = async ({ context: db }) => {
  await db.query("DROP TABLE IF EXISTS jog_recording_chunks");
  await db.query("DROP TABLE IF EXISTS jog_recordings");
};
