import supertest from "supertest";
import type { Sequelize } from "sequelize";
import type { Role } from "@jogwright/shared";
import { createApp, type BuiltApp } from "../app.ts";
import { loadConfig } from "../config.ts";
import { createSequelize } from "../db/connection.ts";
import { DEMO_PASSWORD } from "../db/seed.ts";
import { createUser } from "../modules/users/service.ts";

/** The real app on the real test database; supertest talks to it in-process. */
export const ORIGIN = "http://127.0.0.1";

export interface Harness extends BuiltApp {
  db: Sequelize;
  request: ReturnType<typeof supertest>;
  close(): Promise<void>;
}

export function createHarness(env: Record<string, string> = {}): Harness {
  const config = loadConfig({ ...process.env, SIGN_IN_MAX_FAILURES: "5", ...env });
  const db = createSequelize(config.databaseUrl);
  const built = createApp(config, db);
  return { ...built, db, request: supertest(built.app), close: () => db.close() };
}

export const DEMO_BY_ROLE: Record<Role, string> = {
  operator: "olena",
  engineer: "emeka",
  safety_officer: "sigrid",
  admin: "adele",
};

/** Sign in and return the session cookie header value. */
export async function signIn(h: Harness, username: string, password = DEMO_PASSWORD): Promise<string> {
  const res = await call(h, "post", "/api/auth/sign-in").send({ username, password });
  if (res.status !== 200) throw new Error(`sign-in as ${username} failed: ${res.status} ${JSON.stringify(res.body)}`);
  const cookie = (res.headers["set-cookie"] as unknown as string[] | undefined)?.find((c) => c.startsWith("jogwright_session="));
  if (!cookie) throw new Error("no session cookie");
  return cookie.split(";")[0]!;
}

let counter = 0;
/** A fresh account for a test, so tests never depend on each other's changes to the demo accounts. */
export async function freshUser(h: Harness, roles: Role[], password = "fresh-password-1") {
  counter += 1;
  const username = `t${Date.now().toString(36)}${counter}`;
  const user = await createUser(h.db, { username, displayName: `Test ${username}`, email: `${username}@test.example`, password, roles });
  return { user, username, password };
}

/** A request as our own console sends it: same Host and Origin, optional session cookie. */
export function call(h: Harness, method: "get" | "post" | "put" | "patch" | "delete", path: string, cookie?: string) {
  const r = h.request[method](path).set("Host", "127.0.0.1").set("Origin", ORIGIN);
  return cookie ? r.set("Cookie", cookie) : r;
}
