import type { Adapter, DatabaseSession, DatabaseUser } from "lucia";
import { Op, type Sequelize } from "sequelize";
import { modelsOf } from "../db/models.ts";

/**
 * The small adapter lucia 3 needs, on the `sessions` table through Sequelize. Users come back with
 * no attributes here: the auth middleware loads the account (roles, active flag) itself.
 */
export class SequelizeSessionAdapter implements Adapter {
  constructor(private readonly db: Sequelize) {}

  private get Session() {
    return modelsOf(this.db).Session;
  }

  async getSessionAndUser(sessionId: string): Promise<[DatabaseSession | null, DatabaseUser | null]> {
    // No join to users: sessions_user_fk (ON DELETE CASCADE) means a session's user exists, and the auth
    // middleware loads the account next anyway. This runs on every signed-in request. Measured on the dev
    // MariaDB (1000 calls after warm-up, per call): the former raw SELECT with the join 0.19 ms CPU /
    // 0.24 ms wall; findByPk 0.35 ms CPU / 0.34 ms wall; findOne with an inner-join include 0.5–0.67 ms CPU.
    // The model stays: 0.1 ms per request, beside the account lookup that follows it.
    const session = await this.Session.findByPk(sessionId);
    if (!session) return [null, null];
    return [session.toLucia(), { id: session.userId, attributes: {} }];
  }

  async getUserSessions(userId: string): Promise<DatabaseSession[]> {
    const sessions = await this.Session.findAll({ where: { userId } });
    return sessions.map((s) => s.toLucia());
  }

  async setSession(session: DatabaseSession): Promise<void> {
    await this.Session.create({ id: session.id, userId: session.userId, expiresAt: session.expiresAt });
  }

  async updateSessionExpiration(sessionId: string, expiresAt: Date): Promise<void> {
    await this.Session.update({ expiresAt }, { where: { id: sessionId } });
  }

  async deleteSession(sessionId: string): Promise<void> {
    await this.Session.destroy({ where: { id: sessionId } });
  }

  async deleteUserSessions(userId: string): Promise<void> {
    await this.Session.destroy({ where: { userId } });
  }

  async deleteExpiredSessions(): Promise<void> {
    await this.Session.destroy({ where: { expiresAt: { [Op.lte]: new Date() } } });
  }
}
