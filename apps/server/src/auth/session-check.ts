import type { Session } from "lucia";
import { QueryTypes } from "sequelize";
import type { AppContext } from "../context.ts";

/**
 * Cookie sessions read WITHOUT extending them. lucia's validateSession moves the expiry forward once a
 * session is past half its life, which is right for what a person does but wrong for what a page does on
 * its own: the live-jogging socket's re-check every 10 s and the live page's poll of /api/jog/live every
 * 5 s would keep a page left open alive forever (issue 11, item 10: an idle session must expire while only
 * watching). An expired row is left to lucia (deleted at the next request that validates it).
 */

/** HTTP requests a page makes on a timer carry this header (value "1"): they never extend the session. */
export const BACKGROUND_REQUEST_HEADER = "x-jogwright-background";

export type SessionCheck = "valid" | "expired" | "missing";

/** The session as lucia would give it (never `fresh`), or why not. */
export async function readSessionWithoutExtending(
  ctx: AppContext,
  sessionId: string,
): Promise<{ check: "valid"; session: Session } | { check: "expired" | "missing"; session: null }> {
  const rows = await ctx.db.query<{ user_id: string; expires_at: Date }>(
    "SELECT s.user_id, s.expires_at FROM sessions s JOIN users u ON u.id = s.user_id WHERE s.id = ?",
    { replacements: [sessionId], type: QueryTypes.SELECT },
  );
  const row = rows[0];
  if (!row) return { check: "missing", session: null };
  const expiresAt = new Date(row.expires_at);
  if (expiresAt.getTime() <= Date.now()) return { check: "expired", session: null };
  return { check: "valid", session: { id: sessionId, userId: row.user_id, expiresAt, fresh: false } };
}

export async function checkSessionWithoutExtending(ctx: AppContext, sessionId: string): Promise<SessionCheck> {
  return (await readSessionWithoutExtending(ctx, sessionId)).check;
}
