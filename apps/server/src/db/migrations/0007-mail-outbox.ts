import type { MigrationFn } from "umzug";
import type { Sequelize } from "sequelize";

/**
 * Outgoing mail. Rows are written in the same transaction as the workflow step they announce, then
 * delivered after commit; a failed delivery keeps the row (status failed, last_error) for the retry
 * timer (next_attempt_at, backoff) and the admin's retry button. claimed_until stops two senders from
 * delivering the same row at once.
 */
export const up: MigrationFn<Sequelize> = async ({ context: db }) => {
  await db.query(`
    CREATE TABLE mail_outbox (
      id INT UNSIGNED NOT NULL AUTO_INCREMENT PRIMARY KEY,
      created_at DATETIME(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
      kind VARCHAR(40) NOT NULL,
      recipients JSON NOT NULL CHECK (JSON_VALID(recipients)),
      subject VARCHAR(250) NOT NULL,
      body TEXT NOT NULL,
      status ENUM('pending','sent','failed') NOT NULL DEFAULT 'pending',
      attempts INT UNSIGNED NOT NULL DEFAULT 0,
      last_error TEXT NULL,
      sent_at DATETIME(3) NULL,
      next_attempt_at DATETIME(3) NOT NULL DEFAULT CURRENT_TIMESTAMP(3),
      claimed_until DATETIME(3) NULL,
      KEY mail_outbox_due (status, next_attempt_at)
    ) ENGINE=InnoDB`);
};

export const down: MigrationFn<Sequelize> = async ({ context: db }) => {
  await db.query("DROP TABLE IF EXISTS mail_outbox");
};
