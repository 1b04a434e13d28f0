import { fn, Op, type CreationOptional, type Sequelize } from "sequelize";
import { counter, enumOf, json, NULLABLE, serialId, string, text, time } from "../../db/columns.ts";
import { bindModel, stampedByDatabase, TableModel, type SerialId, type Stamp } from "../../db/model-parts.ts";
import { mailMessageSchema, type MailMessage } from "@jogwright/shared";

/**
 * The outgoing-mail table (`mail_outbox`, migration 0007). The class gives the types; `defineMailModels`
 * binds a copy of it to one Sequelize instance (db/models.ts). The queries are in service.ts.
 */
export class OutboxMailModel extends TableModel<OutboxMailModel> {
  declare id: SerialId;
  /** Stamped by the database. */
  declare createdAt: Stamp;
  declare kind: string;
  declare recipients: string[];
  declare subject: string;
  declare body: string;
  declare status: CreationOptional<MailMessage["status"]>;
  declare attempts: CreationOptional<number>;
  declare lastError: CreationOptional<string | null>;
  declare sentAt: CreationOptional<Date | null>;
  declare nextAttemptAt: Stamp;
  declare claimedUntil: CreationOptional<Date | null>;

  /** The message as the API shows it (`MailMessage`). */
  toApi(): MailMessage {
    return {
      id: this.id,
      createdAt: this.createdAt.toISOString(),
      to: this.recipients,
      subject: this.subject,
      text: this.body,
      kind: this.kind,
      status: this.status,
      attempts: this.attempts,
      lastError: this.lastError,
      sentAt: this.sentAt ? this.sentAt.toISOString() : null,
    };
  }
}

/** `CURRENT_TIMESTAMP(3)`, the database's now. */
export const dbNow = () => fn("CURRENT_TIMESTAMP", 3);

export function defineMailModels(sequelize: Sequelize) {
  const scopes = {
    /** Not sent and not held by a sender right now. */
    unsentUnclaimed: {
      where: {
        status: { [Op.ne]: "sent" },
        [Op.or]: [{ claimedUntil: null }, { claimedUntil: { [Op.lt]: dbNow() } }],
      },
    },
    /** …with attempts left and the next attempt due. */
    due: (maxAttempts: number) => ({
      where: { attempts: { [Op.lt]: maxAttempts }, nextAttemptAt: { [Op.lte]: dbNow() } },
    }),
  };
  // created_at is the column default; there is no updated_at.
  const OutboxMail = bindModel(sequelize, OutboxMailModel, { modelName: "OutboxMail", tableName: "mail_outbox" }, { timestamps: false, scopes }, {
    id: serialId(),
    // created_at and next_attempt_at are NOT NULL with the database's default (its clock): not required here.
    createdAt: stampedByDatabase(),
    kind: string(40),
    recipients: json(),
    subject: string(250),
    body: text(),
    status: enumOf(mailMessageSchema.shape.status.options, "pending"),
    attempts: counter(),
    lastError: text(NULLABLE),
    sentAt: time(NULLABLE),
    nextAttemptAt: stampedByDatabase(),
    claimedUntil: time(NULLABLE),
  });
  return { OutboxMail };
}
