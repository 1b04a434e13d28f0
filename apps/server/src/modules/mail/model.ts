import { QueryTypes, type Sequelize, type Transaction } from "sequelize";
import type { MailMessage } from "@jogwright/shared";

/** Data access for the outgoing-mail table (mail_outbox). */
type MailRow = {
  id: number;
  created_at: Date;
  kind: string;
  recipients: string | string[];
  subject: string;
  body: string;
  status: MailMessage["status"];
  attempts: number;
  last_error: string | null;
  sent_at: Date | null;
};

function toMessage(row: MailRow): MailMessage {
  return {
    id: row.id,
    createdAt: new Date(row.created_at).toISOString(),
    to: typeof row.recipients === "string" ? (JSON.parse(row.recipients) as string[]) : row.recipients,
    subject: row.subject,
    text: row.body,
    kind: row.kind,
    status: row.status,
    attempts: row.attempts,
    lastError: row.last_error,
    sentAt: row.sent_at ? new Date(row.sent_at).toISOString() : null,
  };
}

export async function insertMail(
  db: Sequelize,
  mail: { kind: string; to: string[]; subject: string; text: string },
  transaction?: Transaction,
): Promise<number> {
  const [id] = await db.query("INSERT INTO mail_outbox (kind, recipients, subject, body) VALUES (?, ?, ?, ?)", {
    replacements: [mail.kind, JSON.stringify(mail.to), mail.subject.slice(0, 250), mail.text],
    type: QueryTypes.INSERT,
    transaction,
  });
  return Number(id);
}

export async function listMail(db: Sequelize, limit: number): Promise<MailMessage[]> {
  const rows = await db.query<MailRow>("SELECT * FROM mail_outbox ORDER BY id DESC LIMIT ?", {
    replacements: [limit],
    type: QueryTypes.SELECT,
  });
  return rows.map(toMessage);
}

export async function findMail(db: Sequelize, id: number): Promise<MailMessage | null> {
  const rows = await db.query<MailRow>("SELECT * FROM mail_outbox WHERE id = ?", { replacements: [id], type: QueryTypes.SELECT });
  return rows[0] ? toMessage(rows[0]) : null;
}

/** Ids of unsent rows whose next attempt is due and that have attempts left. */
export async function dueMailIds(db: Sequelize, maxAttempts: number, limit: number): Promise<number[]> {
  const rows = await db.query<{ id: number }>(
    `SELECT id FROM mail_outbox
     WHERE status <> 'sent' AND attempts < ? AND next_attempt_at <= CURRENT_TIMESTAMP(3)
       AND (claimed_until IS NULL OR claimed_until < CURRENT_TIMESTAMP(3))
     ORDER BY id LIMIT ?`,
    { replacements: [maxAttempts, limit], type: QueryTypes.SELECT },
  );
  return rows.map((r) => r.id);
}

/**
 * Take a row for one delivery attempt: counts the attempt and holds it for `holdS` seconds so no other
 * sender (the retry timer, another process) delivers it at the same time. False when already sent or
 * held by someone else.
 */
export async function claimMail(db: Sequelize, id: number, holdS: number): Promise<boolean> {
  const [, affected] = await db.query(
    `UPDATE mail_outbox SET attempts = attempts + 1, claimed_until = CURRENT_TIMESTAMP(3) + INTERVAL ? SECOND
     WHERE id = ? AND status <> 'sent' AND (claimed_until IS NULL OR claimed_until < CURRENT_TIMESTAMP(3))`,
    { replacements: [holdS, id], type: QueryTypes.UPDATE },
  );
  return Number(affected) === 1;
}

export async function markSent(db: Sequelize, id: number): Promise<void> {
  await db.query(
    `UPDATE mail_outbox SET status = 'sent', sent_at = CURRENT_TIMESTAMP(3), last_error = NULL, claimed_until = NULL WHERE id = ?`,
    { replacements: [id] },
  );
}

export async function markFailed(db: Sequelize, id: number, error: string, retryAfterS: number): Promise<void> {
  await db.query(
    `UPDATE mail_outbox SET status = 'failed', last_error = ?, claimed_until = NULL,
            next_attempt_at = CURRENT_TIMESTAMP(3) + INTERVAL ? SECOND
     WHERE id = ?`,
    { replacements: [error.slice(0, 2000), retryAfterS, id] },
  );
}

export async function loadForSending(db: Sequelize, id: number): Promise<{ to: string[]; subject: string; text: string; attempts: number } | null> {
  const m = await findMail(db, id);
  return m ? { to: m.to, subject: m.subject, text: m.text, attempts: m.attempts } : null;
}
