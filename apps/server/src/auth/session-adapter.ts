import type { Adapter, DatabaseSession, DatabaseUser } from "lucia";
import { QueryTypes, type Sequelize } from "sequelize";

type SessionRow = { id: string; user_id: string; expires_at: Date };

/**
 * The small adapter lucia 3 needs, on the `sessions` table through Sequelize. Users come back with
 * no attributes here: the auth middleware loads the account (roles, active flag) itself.
 */
export class SequelizeSessionAdapter implements Adapter {
  constructor(private readonly db: Sequelize) {}

  private toSession(row: SessionRow): DatabaseSession {
    return { id: row.id, userId: row.user_id, expiresAt: new Date(row.expires_at), attributes: {} };
  }

  async getSessionAndUser(sessionId: string): Promise<[DatabaseSession | null, DatabaseUser | null]> {
    const rows = await this.db.query<SessionRow>(
      "SELECT s.id, s.user_id, s.expires_at FROM sessions s JOIN users u ON u.id = s.user_id WHERE s.id = ?",
      { replacements: [sessionId], type: QueryTypes.SELECT },
    );
    const row = rows[0];
    if (!row) return [null, null];
    return [this.toSession(row), { id: row.user_id, attributes: {} }];
  }

  async getUserSessions(userId: string): Promise<DatabaseSession[]> {
    const rows = await this.db.query<SessionRow>("SELECT id, user_id, expires_at FROM sessions WHERE user_id = ?", {
      replacements: [userId],
      type: QueryTypes.SELECT,
    });
    return rows.map((r) => this.toSession(r));
  }

  async setSession(session: DatabaseSession): Promise<void> {
    await this.db.query("INSERT INTO sessions (id, user_id, expires_at) VALUES (?, ?, ?)", {
      replacements: [session.id, session.userId, session.expiresAt],
    });
  }

  async updateSessionExpiration(sessionId: string, expiresAt: Date): Promise<void> {
    await this.db.query("UPDATE sessions SET expires_at = ? WHERE id = ?", { replacements: [expiresAt, sessionId] });
  }

  async deleteSession(sessionId: string): Promise<void> {
    await this.db.query("DELETE FROM sessions WHERE id = ?", { replacements: [sessionId] });
  }

  async deleteUserSessions(userId: string): Promise<void> {
    await this.db.query("DELETE FROM sessions WHERE user_id = ?", { replacements: [userId] });
  }

  async deleteExpiredSessions(): Promise<void> {
    await this.db.query("DELETE FROM sessions WHERE expires_at <= ?", { replacements: [new Date()] });
  }
}
