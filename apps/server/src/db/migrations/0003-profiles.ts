import type { MigrationFn } from "umzug";
import type { Sequelize } from "sequelize";

/**
 * Rate profiles and their versions. A version's content is immutable from the moment it is written:
 * the BEFORE UPDATE trigger allows exactly one change, setting locked_at from NULL (the approval), and
 * refuses everything once locked_at is set; the BEFORE DELETE trigger refuses deleting a locked row.
 * The lifecycle state lives in version_status, so moving a version through its states never touches
 * the locked row. No ON DELETE CASCADE here: MariaDB does not fire triggers for cascaded deletes.
 */
export const up: MigrationFn<Sequelize> = async ({ context: db }) => {
  await db.query(`
    CREATE TABLE profiles (
      id INT UNSIGNED NOT NULL AUTO_INCREMENT PRIMARY KEY,
      name VARCHAR(120) NOT NULL,
      operator_id VARCHAR(40) NOT NULL,
      arm_id INT UNSIGNED NOT NULL,
      created_by VARCHAR(40) NOT NULL,
      created_at DATETIME(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
      KEY profiles_operator (operator_id),
      CONSTRAINT profiles_operator_fk FOREIGN KEY (operator_id) REFERENCES users (id),
      CONSTRAINT profiles_arm_fk FOREIGN KEY (arm_id) REFERENCES arms (id),
      CONSTRAINT profiles_created_by_fk FOREIGN KEY (created_by) REFERENCES users (id)
    ) ENGINE=InnoDB`);
  await db.query(`
    CREATE TABLE profile_versions (
      id INT UNSIGNED NOT NULL AUTO_INCREMENT PRIMARY KEY,
      profile_id INT UNSIGNED NOT NULL,
      number INT UNSIGNED NOT NULL,
      parent_version_id INT UNSIGNED NULL,
      params JSON NOT NULL CHECK (JSON_VALID(params)),
      params_sha256 CHAR(64) NOT NULL,
      note TEXT NOT NULL,
      author_id VARCHAR(40) NOT NULL,
      created_at DATETIME(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
      locked_at DATETIME(3) NULL,
      UNIQUE KEY profile_versions_number_unique (profile_id, number),
      CONSTRAINT profile_versions_profile_fk FOREIGN KEY (profile_id) REFERENCES profiles (id),
      CONSTRAINT profile_versions_parent_fk FOREIGN KEY (parent_version_id) REFERENCES profile_versions (id),
      CONSTRAINT profile_versions_author_fk FOREIGN KEY (author_id) REFERENCES users (id)
    ) ENGINE=InnoDB`);
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
  await db.query(`
    CREATE TRIGGER profile_versions_before_delete BEFORE DELETE ON profile_versions FOR EACH ROW
    BEGIN
      IF OLD.locked_at IS NOT NULL THEN
        SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = 'profile version is locked (approved): it cannot be deleted';
      END IF;
    END`);
  await db.query(`
    CREATE TABLE version_status (
      version_id INT UNSIGNED NOT NULL PRIMARY KEY,
      state ENUM('draft','submitted','approved','rejected','superseded','retired') NOT NULL DEFAULT 'draft',
      submitted_at DATETIME(3) NULL,
      decided_by VARCHAR(40) NULL,
      decided_at DATETIME(3) NULL,
      decision_comment TEXT NULL,
      exceeds_ceilings TINYINT(1) NOT NULL DEFAULT 0,
      updated_at DATETIME(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3) ON UPDATE CURRENT_TIMESTAMP(3),
      KEY version_status_state (state),
      CONSTRAINT version_status_version_fk FOREIGN KEY (version_id) REFERENCES profile_versions (id),
      CONSTRAINT version_status_decided_by_fk FOREIGN KEY (decided_by) REFERENCES users (id)
    ) ENGINE=InnoDB`);
};

export const down: MigrationFn<Sequelize> = async ({ context: db }) => {
  await db.query("DROP TABLE IF EXISTS version_status");
  await db.query("DROP TABLE IF EXISTS profile_versions");
  await db.query("DROP TABLE IF EXISTS profiles");
};
