import { DataTypes, fn, Model, Op, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from "sequelize";
import type { MailMessage } from "@jogwright/shared";

/**
 * The outgoing-mail table (`mail_outbox`, migration 0007). The class gives the types; `defineMailModels`
 * binds a copy of it to one Sequelize instance (db/models.ts). The queries are in service.ts.
 */
export class OutboxMailModel extends Model<InferAttributes<OutboxMailModel>, InferCreationAttributes<OutboxMailModel>> {
  declare id: CreationOptional<number>;
  /** Stamped by the database. */
  declare createdAt: CreationOptional<Date>;
  declare kind: string;
  declare recipients: string[];
  declare subject: string;
  declare body: string;
  declare status: CreationOptional<MailMessage["status"]>;
  declare attempts: CreationOptional<number>;
  declare lastError: CreationOptional<string | null>;
  declare sentAt: CreationOptional<Date | null>;
  declare nextAttemptAt: CreationOptional<Date>;
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
  const OutboxMail = class extends OutboxMailModel {};
  OutboxMail.init(
    {
      id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
      // created_at and next_attempt_at are NOT NULL with the database's default (its clock): not required here.
      createdAt: { type: DataTypes.DATE(3) },
      kind: { type: DataTypes.STRING(40), allowNull: false },
      recipients: { type: DataTypes.JSON, allowNull: false },
      subject: { type: DataTypes.STRING(250), allowNull: false },
      body: { type: DataTypes.TEXT, allowNull: false },
      status: { type: DataTypes.ENUM("pending", "sent", "failed"), allowNull: false, defaultValue: "pending" },
      attempts: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, defaultValue: 0 },
      lastError: { type: DataTypes.TEXT, allowNull: true },
      sentAt: { type: DataTypes.DATE(3), allowNull: true },
      nextAttemptAt: { type: DataTypes.DATE(3) },
      claimedUntil: { type: DataTypes.DATE(3), allowNull: true },
    },
    {
      sequelize,
      modelName: "OutboxMail",
      tableName: "mail_outbox",
      underscored: true,
      // created_at is the column default; there is no updated_at.
      timestamps: false,
      scopes: {
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
      },
    },
  );
  return { OutboxMail };
}
