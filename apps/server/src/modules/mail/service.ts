import { literal, type Sequelize, type Transaction } from "sequelize";
import type { MailKind, MailMessage } from "@jogwright/shared";
import { modelsOf } from "../../db/models.ts";
import { dbNow } from "./model.ts";

/**
 * The outbox's queries (`mail_outbox`): what workflow steps enqueue, what the mailer (src/mail/mailer.ts)
 * claims, sends and marks, and the admin's list. Every time is the database's clock (CURRENT_TIMESTAMP(3)),
 * like the column defaults, so the due and claim comparisons never mix two clocks. Plain objects out.
 */

/** The database's now plus whole seconds (Sequelize has no interval arithmetic; the number is an integer). */
const dbNowPlus = (seconds: number) => literal(`CURRENT_TIMESTAMP(3) + INTERVAL ${Math.trunc(seconds)} SECOND`);

export async function insertMail(
  db: Sequelize,
  /** `kind`: one of MAIL_KINDS (packages/shared/src/labels.ts), which the outbox shows by its label. */
  mail: { kind: MailKind; to: string[]; subject: string; text: string },
  transaction?: Transaction,
): Promise<number> {
  const row = await modelsOf(db).OutboxMail.create(
    { kind: mail.kind, recipients: mail.to, subject: mail.subject.slice(0, 250), body: mail.text },
    { transaction },
  );
  return row.id;
}

export async function listMail(db: Sequelize, limit: number): Promise<MailMessage[]> {
  const rows = await modelsOf(db).OutboxMail.findAll({ order: [["id", "DESC"]], limit });
  return rows.map((r) => r.toApi());
}

export async function findMail(db: Sequelize, id: number): Promise<MailMessage | null> {
  const row = await modelsOf(db).OutboxMail.findByPk(id);
  return row?.toApi() ?? null;
}

/** Ids of unsent rows whose next attempt is due and that have attempts left. */
export async function dueMailIds(db: Sequelize, maxAttempts: number, limit: number): Promise<number[]> {
  const rows = await modelsOf(db)
    .OutboxMail.scope(["unsentUnclaimed", { method: ["due", maxAttempts] }])
    .findAll({ attributes: ["id"], order: [["id", "ASC"]], limit });
  return rows.map((r) => r.id);
}

/**
 * Take a row for one delivery attempt: counts the attempt and holds it for `holdS` seconds so no other
 * sender (the retry timer, another process) delivers it at the same time. False when already sent or
 * held by someone else. One UPDATE, so the check and the claim cannot be split.
 */
export async function claimMail(db: Sequelize, id: number, holdS: number): Promise<boolean> {
  const [affected] = await modelsOf(db)
    .OutboxMail.scope("unsentUnclaimed")
    .update({ attempts: literal("attempts + 1"), claimedUntil: dbNowPlus(holdS) }, { where: { id } });
  return affected === 1;
}

export async function markSent(db: Sequelize, id: number): Promise<void> {
  await modelsOf(db).OutboxMail.update({ status: "sent", sentAt: dbNow(), lastError: null, claimedUntil: null }, { where: { id } });
}

export async function markFailed(db: Sequelize, id: number, error: string, retryAfterS: number): Promise<void> {
  await modelsOf(db).OutboxMail.update(
    { status: "failed", lastError: error.slice(0, 2000), claimedUntil: null, nextAttemptAt: dbNowPlus(retryAfterS) },
    { where: { id } },
  );
}

export async function loadForSending(db: Sequelize, id: number): Promise<{ to: string[]; subject: string; text: string; attempts: number } | null> {
  const row = await modelsOf(db).OutboxMail.findByPk(id, { attributes: ["recipients", "subject", "body", "attempts"] });
  return row ? { to: row.recipients, subject: row.subject, text: row.body, attempts: row.attempts } : null;
}
