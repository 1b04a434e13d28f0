import type { Session } from "lucia";
import type { AppContext } from "../context.ts";
import { modelsOf } from "../db/models.ts";

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
  // A session's user always exists: sessions.user_id references users ON DELETE CASCADE.
  const row = await modelsOf(ctx.db).Session.findByPk(sessionId);
  if (!row) return { check: "missing", session: null };
  if (row.expiresAt.getTime() <= Date.now()) return { check: "expired", session: null };
  return { check: "valid", session: { id: sessionId, userId: row.userId, expiresAt: row.expiresAt, fresh: false } };
}

export async function checkSessionWithoutExtending(ctx: AppContext, sessionId: string): Promise<SessionCheck> {
  return (await readSessionWithoutExtending(ctx, sessionId)).check;
}
