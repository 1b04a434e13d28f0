import type { MigrationFn } from "umzug";
import { DataTypes, type Sequelize } from "sequelize";
import { NOW } from "./columns.ts";

/**
 * Outgoing mail. Rows are written in the same transaction as the workflow step they announce, then
 * delivered after commit; a failed delivery keeps the row (status failed, last_error) for the retry
 * timer (next_attempt_at, backoff) and the admin's retry button. claimed_until stops two senders from
 * delivering the same row at once.
 */
export const up: MigrationFn<Sequelize> = async ({ context: db }) => {
  const qi = db.getQueryInterface();
  await qi.createTable("mail_outbox", {
    id: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, autoIncrement: true, primaryKey: true },
    created_at: { type: DataTypes.DATE(3), allowNull: false, defaultValue: NOW },
    kind: { type: DataTypes.STRING(40), allowNull: false },
    recipients: { type: DataTypes.JSON, allowNull: false },
    subject: { type: DataTypes.STRING(250), allowNull: false },
    body: { type: DataTypes.TEXT, allowNull: false },
    status: { type: DataTypes.ENUM("pending", "sent", "failed"), allowNull: false, defaultValue: "pending" },
    attempts: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, defaultValue: 0 },
    last_error: { type: DataTypes.TEXT, allowNull: true },
    sent_at: { type: DataTypes.DATE(3), allowNull: true },
    next_attempt_at: { type: DataTypes.DATE(3), allowNull: false, defaultValue: NOW },
    claimed_until: { type: DataTypes.DATE(3), allowNull: true },
  });
  await qi.addIndex("mail_outbox", ["status", "next_attempt_at"], { name: "mail_outbox_due" });
};

export const down: MigrationFn<Sequelize> = async ({ context: db }) => {
  await db.getQueryInterface().dropTable("mail_outbox");
};
