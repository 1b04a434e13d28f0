import http from "node:http";
import type { AddressInfo } from "node:net";
import supertest from "supertest";
import type { Sequelize } from "sequelize";
import type { Role, User } from "@jogwright/shared";
import { createApp, type BuiltApp } from "../app.ts";
import { loadConfig } from "../config.ts";
import { createSequelize } from "../db/connection.ts";
import { DEMO_PASSWORD } from "../db/seed.ts";
import { findArmIdBySlug } from "../modules/arms/service.ts";
import { createUser } from "../modules/users/service.ts";
import { attachJogSockets, JOG_SOCKET_PATH, type JogSockets } from "../modules/jog/socket.ts";
import { startFakeSmtp, type FakeSmtp } from "../mail/fake-smtp.ts";

/**
 * The real app on the real test database; supertest talks to it in-process. ORIGIN is the harness's
 * PUBLIC_ORIGIN: the console's address as `call()` presents it.
 */
export const ORIGIN = "http://127.0.0.1";

export interface Harness extends BuiltApp {
  db: Sequelize;
  request: ReturnType<typeof supertest>;
  close(): Promise<void>;
}

/**
 * `env` overrides the environment, e.g. SMTP_PORT to point the mailer at a test's own fake SMTP server.
 * close() waits for mail deliveries under way, then closes the database.
 */
export function createHarness(env: Record<string, string> = {}): Harness {
  // Tests start many sessions of one account in a few seconds: the start rate is relaxed unless a test sets
  // it (session-limits.test.ts tests the default); the caps on live sessions keep their defaults.
  const config = loadConfig({ ...process.env, SIGN_IN_MAX_FAILURES: "5", JOG_STARTS_PER_WINDOW: "1000", PUBLIC_ORIGIN: ORIGIN, ...env });
  const db = createSequelize(config.databaseUrl);
  const built = createApp(config, db);
  return {
    ...built,
    db,
    request: supertest(built.app),
    close: async () => {
      await built.ctx.mailer.stop();
      await built.ctx.scale?.close();
      await db.close();
    },
  };
}

/** A harness whose mail goes to its own fake SMTP server on a free port (closed with the harness). */
export async function createMailHarness(env: Record<string, string> = {}): Promise<Harness & { smtp: FakeSmtp }> {
  const smtp = await startFakeSmtp({ port: 0, dir: null });
  const h = createHarness({ SIGN_IN_MAX_FAILURES: "1000", SMTP_PORT: String(smtp.port), ...env });
  const close = h.close;
  return {
    ...h,
    smtp,
    close: async () => {
      await close();
      await smtp.close();
    },
  };
}

/**
 * The id of the seeded demo arm `slug` (by slug, not by joint count: a test that adds another arm with
 * as many joints cannot change which arm the others use).
 */
export async function demoArmId(h: Harness, slug: "cell-arm-6" | "cell-arm-7"): Promise<number> {
  const id = await findArmIdBySlug(h.db, slug);
  if (id === null) throw new Error(`demo arm ${slug} is not seeded`);
  return id;
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

/** A harness for a file that signs in often (sign-in failures relaxed) and a session of the demo account `username`. */
export async function harnessSignedInAs(username: string): Promise<{ h: Harness; cookie: string }> {
  const h = createHarness({ SIGN_IN_MAX_FAILURES: "1000" });
  return { h, cookie: await signIn(h, username) };
}

let counter = 0;
/** A fresh account for a test, so tests never depend on each other's changes to the demo accounts. */
export async function freshUser(h: Harness, roles: Role[], password = "fresh-password-1") {
  counter += 1;
  const username = `t${Date.now().toString(36)}${counter}`;
  const user = await createUser(h.db, { username, displayName: `Test ${username}`, email: `${username}@test.example`, password, roles });
  return { user, username, password };
}

/** A fresh account signed in: its user, its credentials and the session cookie. */
export interface SignedInUser {
  user: User;
  username: string;
  password: string;
  cookie: string;
}

/** A fresh account with `roles`, signed in: its user and session cookie. */
export async function signedInUser(h: Harness, roles: Role[]): Promise<SignedInUser> {
  const u = await freshUser(h, roles);
  return { ...u, cookie: await signIn(h, u.username, u.password) };
}

/** A request as our own console sends it: same Host and Origin, optional session cookie. */
export function call(h: Harness, method: "get" | "post" | "put" | "patch" | "delete", path: string, cookie?: string) {
  const r = h.request[method](path).set("Host", "127.0.0.1").set("Origin", ORIGIN);
  return cookie ? r.set("Cookie", cookie) : r;
}

/**
 * The harness's app on a real http.Server listening on an ephemeral loopback port, with the live-jogging
 * WebSocket attached (as server.ts does), for tests with real network clients. close() ends live sessions,
 * flushes their recordings and stops listening (the harness itself is closed separately).
 */
export async function listenHarness(h: Harness): Promise<{ baseUrl: string; wsUrl: string; jog: JogSockets; close(): Promise<void> }> {
  const server = http.createServer(h.app);
  const jog = attachJogSockets(server, h.ctx);
  await new Promise<void>((resolve) => server.listen(0, "127.0.0.1", resolve));
  const { port } = server.address() as AddressInfo;
  const baseUrl = `http://127.0.0.1:${port}`;
  // Real clients of this listener send its address as Origin; the port is known only now, so it joins
  // the allowed origins here (in production PUBLIC_ORIGIN names it).
  if (!h.ctx.config.allowedOrigins.includes(baseUrl)) h.ctx.config.allowedOrigins.push(baseUrl);
  return {
    baseUrl,
    wsUrl: `ws://127.0.0.1:${port}${JOG_SOCKET_PATH}`,
    jog,
    close: async () => {
      await jog.close();
      server.closeAllConnections();
      await new Promise((r) => server.close(r));
    },
  };
}
