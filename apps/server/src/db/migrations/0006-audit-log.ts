import type { MigrationFn } from "umzug";
import type { Sequelize } from "sequelize";

/**
 * The append-only audit trail: who changed what and when, with the SHA-256 of the record's canonical
 * JSON before and after. Triggers refuse UPDATE and DELETE. actor_id has no foreign key on purpose: the
 * trail must outlive whatever it mentions.
 */
export const up: MigrationFn<Sequelize> = async ({ context: db }) => {
  await db.query(`
    CREATE TABLE audit_log (
      id BIGINT UNSIGNED NOT NULL AUTO_INCREMENT PRIMARY KEY,
      at DATETIME(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
      actor_id VARCHAR(40) NULL,
      entity ENUM('user','arm','profile','version','ceilings','approval','session') NOT NULL,
      entity_id VARCHAR(64) NOT NULL,
      action VARCHAR(60) NOT NULL,
      summary TEXT NOT NULL,
      sha256_before CHAR(64) NULL,
      sha256_after CHAR(64) NULL,
      KEY audit_log_at (at),
      KEY audit_log_entity (entity, entity_id),
      KEY audit_log_actor (actor_id, at)
    ) ENGINE=InnoDB`);
  await db.query(`
    CREATE TRIGGER audit_log_before_update BEFORE UPDATE ON audit_log FOR EACH ROW
      SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = 'the audit log is append-only: entries cannot be changed'`);
  await db.query(`
    CREATE TRIGGER audit_log_before_delete BEFORE DELETE ON audit_log FOR EACH ROW
      SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = 'the audit log is append-only: entries cannot be deleted'`);
};

export const down: MigrationFn<Sequelize> = async ({ context: db }) => {
  await db.query("DROP TABLE IF EXISTS audit_log");
};
