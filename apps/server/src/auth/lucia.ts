import { Lucia, TimeSpan } from "lucia";
import type { Sequelize } from "sequelize";
import { SequelizeSessionAdapter } from "./session-adapter.ts";

export const SESSION_COOKIE = "jogwright_session";

export function createLucia(db: Sequelize) {
  return new Lucia(new SequelizeSessionAdapter(db), {
    sessionExpiresIn: new TimeSpan(12, "h"),
    sessionCookie: {
      name: SESSION_COOKIE,
      expires: false,
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
