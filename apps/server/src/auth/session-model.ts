import type { DatabaseSession } from "lucia";
import type { Sequelize } from "sequelize";
import { primaryKey, string, time, userRef } from "../db/columns.ts";
import { bindModel, TableModel } from "../db/model-parts.ts";

/**
 * lucia's sessions (`sessions`, migration 0001). The class gives the types; `defineSessionModels` binds a
 * copy of it to one Sequelize instance (db/models.ts), where Session belongs to User (`user`). lucia reaches
 * it through session-adapter.ts.
 */
export class SessionModel extends TableModel<SessionModel> {
  declare id: string;
  declare userId: string;
  declare expiresAt: Date;

  toLucia(): DatabaseSession {
    return { id: this.id, userId: this.userId, expiresAt: this.expiresAt, attributes: {} };
  }
}

export function defineSessionModels(sequelize: Sequelize) {
  const Session = bindModel(sequelize, SessionModel, { modelName: "Session", tableName: "sessions" }, { timestamps: false }, {
    id: primaryKey(string(64)),
    userId: userRef(),
    expiresAt: time(),
  });
  return { Session };
}
