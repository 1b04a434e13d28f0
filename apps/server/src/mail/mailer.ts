import nodemailer, { type Transporter } from "nodemailer";
import type { Sequelize, Transaction } from "sequelize";
import * as outbox from "../modules/mail/service.ts";
import type { MailKind } from "@jogwright/shared";

/**
 * Outgoing mail. A workflow step enqueues its mails inside its own transaction (`enqueue`), so the step
 * and its mails commit together; delivery starts after the commit and never fails the step. A failed
 * delivery is marked failed with the error and retried with backoff by the timer (`start`) and by the
 * admin's retry (`deliver`).
 */
export interface MailSettings {
  host: string;
  port: number;
  from: string;
}

export interface OutgoingMail {
  /** One of MAIL_KINDS (packages/shared/src/labels.ts). */
  kind: MailKind;
  to: string[];
  subject: string;
  text: string;
}

/** Attempts before a message is left for a person to retry. */
export const MAX_MAIL_ATTEMPTS = 8;
/** How long one attempt holds its row against other senders. */
const CLAIM_HOLD_S = 60;

/** Backoff after the n-th failed attempt: 5 s, 10 s, 20 s … at most 10 min. */
export function retryDelayS(attempts: number): number {
  return Math.min(600, 5 * 2 ** Math.max(0, attempts - 1));
}

export class Mailer {
  private transport: Transporter | null = null;
  private timer: NodeJS.Timeout | null = null;
  private readonly inFlight = new Set<Promise<unknown>>();

  constructor(
    private readonly db: Sequelize,
    private settings: MailSettings,
  ) {}

  /** The fake SMTP may bind a port chosen at start-up (SMTP_PORT=0): point the sender at it. */
  setPort(port: number): void {
    this.settings = { ...this.settings, port };
    this.transport = null;
  }

  private getTransport(): Transporter {
    this.transport ??= nodemailer.createTransport({
      host: this.settings.host,
      port: this.settings.port,
      secure: false,
      ignoreTLS: true,
      connectionTimeout: 5000,
      greetingTimeout: 5000,
      socketTimeout: 10_000,
    });
    return this.transport;
  }

  /** Write the mail into the outbox within `transaction`; it is sent once the transaction commits. */
  async enqueue(transaction: Transaction, mail: OutgoingMail): Promise<number | null> {
    const to = [...new Set(mail.to.filter(Boolean))];
    if (to.length === 0) return null;
    const id = await outbox.insertMail(this.db, { ...mail, to }, transaction);
    transaction.afterCommit(() => {
      this.track(this.deliver([id]));
    });
    return id;
  }

  private track(p: Promise<unknown>): void {
    const guarded = p.catch((error: unknown) => console.error("[jogwright] mail delivery:", error));
    this.inFlight.add(guarded);
    void guarded.finally(() => this.inFlight.delete(guarded));
  }

  /** Try to send these outbox rows now; each ends sent or failed (with its error and next retry time). */
  async deliver(ids: number[]): Promise<void> {
    for (const id of ids) {
      if (!(await outbox.claimMail(this.db, id, CLAIM_HOLD_S))) continue;
      const mail = await outbox.loadForSending(this.db, id);
      if (!mail) continue;
      try {
        await this.getTransport().sendMail({ from: this.settings.from, to: mail.to, subject: mail.subject, text: mail.text });
        await outbox.markSent(this.db, id);
      } catch (error) {
        const message = error instanceof Error ? error.message : String(error);
        await outbox.markFailed(this.db, id, message, retryDelayS(mail.attempts));
      }
    }
  }

  /** Send whatever is due (pending after a crash, failed and past its backoff). */
  async deliverDue(): Promise<void> {
    await this.deliver(await outbox.dueMailIds(this.db, MAX_MAIL_ATTEMPTS, 50));
  }

  /** Retry due mail every `intervalMs` until stopped. */
  start(intervalMs = 5000): void {
    if (this.timer) return;
    this.timer = setInterval(() => this.track(this.deliverDue()), intervalMs);
    this.timer.unref();
    this.track(this.deliverDue());
  }

  /** Stop the timer and wait for deliveries under way (call before closing the database). */
  async stop(): Promise<void> {
    if (this.timer) clearInterval(this.timer);
    this.timer = null;
    while (this.inFlight.size) await Promise.all([...this.inFlight]);
    this.transport?.close();
    this.transport = null;
  }

  /** Resolves when every delivery started so far has ended (tests use it instead of sleeping). */
  async settled(): Promise<void> {
    while (this.inFlight.size) await Promise.all([...this.inFlight]);
  }
}
