import { spawn, type ChildProcess } from "node:child_process";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { freePort } from "../test/free-port.ts";
import { Redis } from "ioredis";
import { Queue } from "bullmq";
import { JOG_CLOSE_CODES, sweepResultSchema, takeStreamEvents } from "@jogwright/shared";
import { createHarness, freshUser, type Harness } from "../test/harness.ts";
import { approveInDatabase, createProfile, freshTeam, sixAxisArm, type Team } from "../test/profiles-fixture.ts";
import { JogTestClient } from "../modules/jog/jog-test-client.ts";
import { TRIAL_QUEUE } from "../modules/trials/trial-queue.ts";

/**
 * Issue 11, "When one machine is not enough": two real server processes on this file's database and one
 * Redis (REDIS_TEST_URL, started by `npm test` on loopback), as a scaled-out site runs them behind a load
 * balancer. Instance A takes no bench jobs (TRIAL_QUEUE_CONCURRENCY=0), so a sweep asked of A can only
 * finish if B's worker takes its runs from the shared queue.
 */
const redisUrl = process.env.REDIS_TEST_URL;
if (!redisUrl) throw new Error("REDIS_TEST_URL is not set: the scale-out tests need a Redis; `npm test` starts one on loopback.");

interface Instance {
  name: string;
  baseUrl: string;
  child: ChildProcess;
  log: string[];
}


async function startInstance(name: string, env: Record<string, string>): Promise<Instance> {
  const port = await freePort();
  const serverDir = path.resolve(import.meta.dirname, "../..");
  const child = spawn(path.join(serverDir, "node_modules/.bin/tsx"), ["src/server.ts"], {
    cwd: serverDir,
    env: {
      ...process.env,
      NODE_ENV: "test",
      PORT: String(port),
      SMTP_PORT: "0",
      FAKE_SMTP: "1",
      REDIS_URL: redisUrl!,
      SIGN_IN_MAX_FAILURES: "4",
      JOG_STARTS_PER_WINDOW: "1000",
      ...env,
    },
    stdio: ["ignore", "pipe", "pipe"],
  });
  const log: string[] = [];
  child.stdout!.on("data", (d: Buffer) => log.push(d.toString()));
  child.stderr!.on("data", (d: Buffer) => log.push(d.toString()));
  const baseUrl = `http://127.0.0.1:${port}`;
  const deadline = Date.now() + 60_000;
  for (;;) {
    if (child.exitCode !== null) throw new Error(`instance ${name} exited: ${log.join("")}`);
    try {
      if ((await fetch(`${baseUrl}/api/health`)).ok) break;
    } catch {
      // not listening yet
    }
    if (Date.now() > deadline) throw new Error(`instance ${name} did not answer within 60 s: ${log.join("")}`);
    await new Promise((r) => setTimeout(r, 200));
  }
  return { name, baseUrl, child, log };
}

async function stopInstance(i: Instance | undefined): Promise<void> {
  if (!i || i.child.exitCode !== null) return;
  const exited = new Promise((r) => i.child.once("exit", r));
  i.child.kill("SIGTERM");
  await exited;
}

async function signInAt(i: Instance, username: string, password: string): Promise<string> {
  const res = await fetch(`${i.baseUrl}/api/auth/sign-in`, {
    method: "POST",
    headers: { "Content-Type": "application/json", Origin: i.baseUrl },
    body: JSON.stringify({ username, password }),
  });
  if (!res.ok) throw new Error(`sign-in at ${i.name}: ${res.status} ${await res.text()}`);
  return res.headers.getSetCookie().map((c) => c.split(";")[0]).join("; ");
}

let h: Harness;
let a: Instance;
let b: Instance;
let versionId: number;
let team: Team;
let approvedVersionId: number;

beforeAll(async () => {
  const redis = new Redis(redisUrl);
  await redis.flushdb();
  await redis.quit();
  // The file's database (fresh-database.ts) is migrated and seeded: the instances only open it.
  h = createHarness();
  team = await freshTeam(h);
  const arm = await sixAxisArm(h);
  versionId = (await createProfile(h, team, arm)).latestVersion.id;
  approvedVersionId = (await createProfile(h, team, arm)).latestVersion.id;
  await approveInDatabase(h, approvedVersionId, team.officer.id);
  const common = { DATABASE_URL: process.env.DATABASE_URL!, MIGRATION_DATABASE_URL: process.env.MIGRATION_DATABASE_URL ?? process.env.DATABASE_URL!, SEED_DEMO: "0" };
  // Together: the database is migrated already, so neither has a migration to race the other for.
  [a, b] = await Promise.all([
    startInstance("A", { ...common, TRIAL_QUEUE_CONCURRENCY: "0" }),
    startInstance("B", { ...common, TRIAL_QUEUE_CONCURRENCY: "2", TRIAL_POOL_THREADS: "2" }),
  ]);
}, 150_000);

afterAll(async () => {
  await stopInstance(a);
  await stopInstance(b);
  await h?.close();
});

describe("two instances and one Redis", () => {
  it("a sweep asked of instance A, which takes no jobs, runs on instance B's worker and streams its result", async () => {
    const cookie = await signInAt(a, "emeka", "demo-pass-2026");
    const res = await fetch(`${a.baseUrl}/api/bench/sweeps`, {
      method: "POST",
      headers: { "Content-Type": "application/json", Cookie: cookie, Origin: a.baseUrl },
      body: JSON.stringify({
        versionId,
        axes: [{ parameter: "damping.lambdaMaxM", from: 0.005, to: 0.06, steps: 3 }],
        builtins: ["wrist-line"],
        x: "peakWristAccelRadPerS2",
        y: "maxDeviationM",
      }),
    });
    expect(res.status).toBe(200);
    const text = await res.text();
    const events = takeStreamEvents(text).events;
    const last = events[events.length - 1]!;
    expect(last.event).toBe("result");
    const result = sweepResultSchema.parse(last.data);
    expect(result.points).toHaveLength(3);
    // Every run (3 points × 1 trial) was taken by B's worker: the finished jobs (kept 5 min) name it.
    const idOf = (i: Instance) => /scaled out through Redis as instance ([\w-]+)/i.exec(i.log.join(""))?.[1];
    expect(idOf(a)).toBeTruthy();
    expect(idOf(b)).toBeTruthy();
    const queue = new Queue(TRIAL_QUEUE, { connection: new Redis(redisUrl!, { maxRetriesPerRequest: null }) });
    try {
      const done = await queue.getCompleted();
      expect(done).toHaveLength(3);
      expect(new Set(done.map((j) => (j.returnvalue as { by: string }).by))).toEqual(new Set([idOf(b)]));
    } finally {
      await queue.close();
    }
  }, 120_000);

  it("the sign-in limit holds over both instances: four wrong passwords split between A and B, and the fifth is refused at either", async () => {
    const attempt = (i: Instance) =>
      fetch(`${i.baseUrl}/api/auth/sign-in`, {
        method: "POST",
        headers: { "Content-Type": "application/json", Origin: i.baseUrl },
        body: JSON.stringify({ username: "tomas", password: "not-the-password" }),
      }).then((r) => r.status);
    expect([await attempt(a), await attempt(b), await attempt(a), await attempt(b)]).toEqual([401, 401, 401, 401]);
    expect(await attempt(a)).toBe(429);
    expect(await attempt(b)).toBe(429);
  });

  it("a safety officer on instance B lists, watches and stops a session driven on instance A; the watch ends with the session", async () => {
    const wsUrl = (i: Instance) => `${i.baseUrl.replace("http", "ws")}/ws/jog`;
    const operatorCookie = await signInAt(a, team.operator.username, "fresh-password-1");
    const driver = await JogTestClient.connect(wsUrl(a), { Cookie: operatorCookie, Origin: a.baseUrl });
    const officerCookie = await signInAt(b, "sigrid", "demo-pass-2026");
    const watcher = await JogTestClient.connect(wsUrl(b), { Cookie: officerCookie, Origin: b.baseUrl });
    try {
      driver.send({ type: "start", versionId: approvedVersionId });
      const started = await driver.next((m) => m.type === "session" || m.type === "error", 10_000);
      if (started.type !== "session") throw new Error(`start refused: ${JSON.stringify(started)}`);
      const sessionId = started.session.sessionId;
      await driver.nextState();

      const live = (await (await fetch(`${b.baseUrl}/api/jog/live`, { headers: { Cookie: officerCookie } })).json()) as { sessions: { sessionId: string }[] };
      expect(live.sessions.map((s) => s.sessionId)).toContain(sessionId);

      watcher.send({ type: "watch", sessionId });
      const watched = await watcher.next((m) => m.type === "session" || m.type === "error", 5000);
      expect(watched).toMatchObject({ type: "session", session: { sessionId, isWatching: true } });
      const seen = await watcher.nextState((st) => st.sessionId === sessionId, 5000);
      expect(seen.estopLatched).toBe(false);

      watcher.send({ type: "estop" });
      const latched = await driver.nextState((st) => st.estopLatched, 5000);
      expect(latched.qdot.every((v) => v === 0)).toBe(true);
      await watcher.nextState((st) => st.estopLatched, 5000);

      driver.send({ type: "stop" });
      const ended = await watcher.next((m) => m.type === "ended", 5000);
      expect(ended).toMatchObject({ type: "ended", sessionId });
      // Gone from the directory once it ended.
      const after = (await (await fetch(`${b.baseUrl}/api/jog/live`, { headers: { Cookie: officerCookie } })).json()) as { sessions: { sessionId: string }[] };
      expect(after.sessions.map((s) => s.sessionId)).not.toContain(sessionId);
    } finally {
      await watcher.close();
      await driver.close();
    }
  }, 60_000);

  it("an account deactivated through instance A has its session on instance B stopped and its socket closed (4403) at once", async () => {
    const wsUrl = `${b.baseUrl.replace("http", "ws")}/ws/jog`;
    const engineer = await freshUser(h, ["engineer"]);
    const draft = (await createProfile(h, team, await sixAxisArm(h))).latestVersion.id;
    const driver = await JogTestClient.connect(wsUrl, { Cookie: await signInAt(b, engineer.username, engineer.password), Origin: b.baseUrl });
    const closed = new Promise<number>((resolve) => driver.ws.once("close", (code: number) => resolve(code)));
    try {
      driver.send({ type: "start", versionId: draft });
      const started = await driver.next((m) => m.type === "session" || m.type === "error", 10_000);
      if (started.type !== "session") throw new Error(`start refused: ${JSON.stringify(started)}`);
      await driver.nextState();
      const adminCookie = await signInAt(a, "adele", "demo-pass-2026");
      // Waited for from before the PATCH: B may end the session before A's answer reaches this test.
      const ending = driver.next((m) => m.type === "ended", 3000);
      const patchedAt = performance.now();
      const res = await fetch(`${a.baseUrl}/api/users/${engineer.user.id}`, {
        method: "PATCH",
        headers: { "Content-Type": "application/json", Cookie: adminCookie, Origin: a.baseUrl },
        body: JSON.stringify({ isActive: false }),
      });
      expect(res.status).toBe(200);
      const ended = await ending;
      expect(ended).toMatchObject({ type: "ended", reason: "account-deactivated" });
      expect(await closed).toBe(JOG_CLOSE_CODES.accountDeactivated);
      // Through Redis, not B's 10 s re-check of the account.
      expect(performance.now() - patchedAt).toBeLessThan(3000);
    } finally {
      await driver.close();
    }
  }, 60_000);

  it("the live-session cap of one account counts its sessions on every instance", async () => {
    const engineer = await freshUser(h, ["engineer"]);
    const draft = (await createProfile(h, team, await sixAxisArm(h))).latestVersion.id;
    const open = async (i: Instance) =>
      JogTestClient.connect(`${i.baseUrl.replace("http", "ws")}/ws/jog`, { Cookie: await signInAt(i, engineer.username, engineer.password), Origin: i.baseUrl });
    const clients = [await open(a), await open(b), await open(a), await open(b)];
    try {
      const answers = [];
      for (const c of clients) {
        c.send({ type: "start", versionId: draft });
        answers.push(await c.next((m) => m.type === "session" || m.type === "error", 10_000));
      }
      // JOG_MAX_SESSIONS_PER_ACCOUNT is 3 (the default): two on A and one on B went live, the fourth is refused on B.
      expect(answers.slice(0, 3).map((m) => m.type)).toEqual(["session", "session", "session"]);
      expect(answers[3]).toMatchObject({ type: "error", code: "account_session_limit" });
    } finally {
      await Promise.all(clients.map((c) => c.close()));
    }
  }, 60_000);
});
