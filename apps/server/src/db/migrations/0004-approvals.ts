import type { MigrationFn } from "umzug";
import type { Sequelize } from "sequelize";

/** The record of each approval: who, when, the comment and the hash approved. Append-only (triggers). */
export const up: MigrationFn<Sequelize> = async ({ context: db }) => {
  await db.query(`
    CREATE TABLE approvals (
      id INT UNSIGNED NOT NULL AUTO_INCREMENT PRIMARY KEY,
      version_id INT UNSIGNED NOT NULL,
      approver_id VARCHAR(40) NOT NULL,
      approved_at DATETIME(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
      comment TEXT NOT NULL,
      params_sha256 CHAR(64) NOT NULL,
      UNIQUE KEY approvals_version_unique (version_id),
      CONSTRAINT approvals_version_fk FOREIGN KEY (version_id) REFERENCES profile_versions (id),
      CONSTRAINT approvals_approver_fk FOREIGN KEY (approver_id) REFERENCES users (id)
    ) ENGINE=InnoDB`);
  await db.query(`
    CREATE TRIGGER approvals_before_update BEFORE UPDATE ON approvals FOR EACH ROW
      SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = 'approvals are append-only: they cannot be changed'`);
  await db.query(`
    CREATE TRIGGER approvals_before_delete BEFORE DELETE ON approvals FOR EACH ROW
      SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = 'approvals are append-only: they cannot be deleted'`);
};

export const down: MigrationFn<Sequelize> = async ({ context: db }) => {
  await db.query("DROP TABLE IF EXISTS approvals");
};
