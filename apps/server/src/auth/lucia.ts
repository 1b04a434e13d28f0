import { Lucia, TimeSpan } from "lucia";
import type { Sequelize } from "sequelize";
import { SequelizeSessionAdapter } from "./session-adapter.ts";

export const SESSION_COOKIE = "jogwright_session";

export function createLucia(db: Sequelize) {
  return new Lucia(new SequelizeSessionAdapter(db), {
    sessionExpiresIn: new TimeSpan(12, "h"),
    sessionCookie: {
      name: SESSION_COOKIE,
      // The cookie lives as long as the session row (Max-Age = sessionExpiresIn); when lucia extends the
      // session (session.fresh), the session loader sends the cookie again with a new Max-Age.
      expires: true,
      // `secure` is decided per request (see cookies.ts): Secure behind https, plain on loopback http.
      attributes: { sameSite: "lax", secure: false },
    },
  });
}
export type AppLucia = ReturnType<typeof createLucia>;

declare module "lucia" {
  interface Register {
    Lucia: AppLucia;
  }
}
