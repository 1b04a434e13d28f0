import type { DatabaseSession } from "lucia";
import { DataTypes, Model, type InferAttributes, type InferCreationAttributes, type Sequelize } from "sequelize";

/**
 * lucia's sessions (`sessions`, migration 0001). The class gives the types; `defineSessionModels` binds a
 * copy of it to one Sequelize instance (db/models.ts), where Session belongs to User (`user`). lucia reaches
 * it through session-adapter.ts.
 */
export class SessionModel extends Model<InferAttributes<SessionModel>, InferCreationAttributes<SessionModel>> {
  declare id: string;
  declare userId: string;
  declare expiresAt: Date;

  toLucia(): DatabaseSession {
    return { id: this.id, userId: this.userId, expiresAt: this.expiresAt, attributes: {} };
  }
}

export function defineSessionModels(sequelize: Sequelize) {
  const Session = class extends SessionModel {};
  Session.init(
    {
      id: { type: DataTypes.STRING(64), primaryKey: true },
      userId: { type: DataTypes.STRING(40), allowNull: false },
      expiresAt: { type: DataTypes.DATE(3), allowNull: false },
    },
    { sequelize, modelName: "Session", tableName: "sessions", underscored: true, timestamps: false },
  );
  return { Session };
}
