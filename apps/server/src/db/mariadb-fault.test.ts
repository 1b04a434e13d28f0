import { readFileSync } from "node:fs";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { freePort } from "../test/free-port.ts";
import { recordedFrameSchema, type RecordedFrame } from "@jogwright/shared";
import { DATA_DIR, recreateDatabase, startPrivateMariadb, type PrivateMariadb } from "../../../../scripts/lib/setup.mjs";
import { loadConfig } from "../config.ts";
import { createSequelize } from "./connection.ts";
import { prepareDatabase } from "./prepare.ts";
import { call, createHarness, listenHarness, type Harness } from "../test/harness.ts";
import { approveInDatabase, createProfile, freshTeam, sixAxisArm } from "../test/profiles-fixture.ts";
import { JogTestClient, sleep } from "../modules/jog/jog-test-client.ts";

/**
 * Issue 11, "Fault tests in CI": a real MariaDB of this file's own (the shared test server is never
 * touched) is paused with SIGSTOP and then stopped with SIGTERM while two sessions jog. Jogging goes on
 * through both (the simulation never waits on the database), the API answers 503 database_unavailable,
 * and once MariaDB is back each session's recording is complete: as many frames as its driver was sent,
 * none dropped, and no gap in their time line.
 */
const NAME = "mariadb-fault";
const DATABASE = "jogwright_fault";


const pidOf = () => Number(readFileSync(path.join(DATA_DIR, NAME, "mariadb.pid"), "utf8").trim());

let port: number;
let mariadb: PrivateMariadb;
let h: Harness;
let listener: Awaited<ReturnType<typeof listenHarness>>;

beforeAll(async () => {
  port = await freePort();
  mariadb = await startPrivateMariadb({ name: NAME, port, database: DATABASE });
  recreateDatabase(mariadb.socket, DATABASE);
  const env = { DATABASE_URL: mariadb.runtimeUrl, MIGRATION_DATABASE_URL: mariadb.migrationUrl };
  const config = loadConfig({ ...process.env, ...env });
  const db = createSequelize(config.databaseUrl);
  try {
    await prepareDatabase(config, db, { seed: true });
  } finally {
    await db.close();
  }
  h = createHarness(env);
  listener = await listenHarness(h);
}, 60_000);

afterAll(async () => {
  await listener?.close();
  await h?.close();
  if (mariadb) {
    try {
      process.kill(pidOf(), "SIGCONT");
    } catch {
      // not running
    }
    await mariadb.stop();
  }
});

/** Polls `probe` until it returns true; fails after timeoutMs. */
async function until(what: string, probe: () => Promise<boolean>, timeoutMs: number): Promise<void> {
  const deadline = Date.now() + timeoutMs;
  while (!(await probe())) {
    if (Date.now() > deadline) throw new Error(`${what}: not within ${timeoutMs} ms`);
    await sleep(100);
  }
}

describe("MariaDB paused, then stopped, while two sessions jog", () => {
  it("jogging continues, the API answers 503, and both recordings are complete once it is back", async () => {
    const teams = [await freshTeam(h), await freshTeam(h)];
    const arm = await sixAxisArm(h);
    const drivers: { client: JogTestClient; cookie: string; sessionId: string }[] = [];
    for (const team of teams) {
      // Approved through SQL: the submission's trial evidence (minutes of CPU on a busy machine) is not what this tests.
      const profile = await createProfile(h, team, arm);
      await approveInDatabase(h, profile.latestVersion.id, team.officer.id);
      const version = profile.latestVersion;
      const client = await JogTestClient.connect(listener.wsUrl, { Cookie: team.operator.cookie, Origin: listener.baseUrl });
      client.send({ type: "start", versionId: version.id });
      // Starting the simulation thread beside the other fault files may take a few seconds (database-outage.test.ts).
      const session = await client.next((m) => m.type === "session", 10_000);
      await client.nextState(undefined, 10_000);
      // A fresh press, then hold a slow move (+x, then the stream keeps the watchdog fed).
      client.input = { ...client.input, enabling: false };
      client.sendInput();
      await sleep(30);
      client.input = { ...client.input, enabling: true, axes: [0.05, 0, 0, 0, 0, 0] };
      client.stream(20);
      if (session.type !== "session") throw new Error("no session");
      drivers.push({ client, cookie: team.engineer.cookie, sessionId: session.session.sessionId });
    }
    const statesOf = (c: JogTestClient) => c.messages.filter((m) => m.msg.type === "state").length;
    const movingFor = async (ms: number) => {
      const counts = drivers.map((d) => statesOf(d.client));
      await sleep(ms);
      // 60 frames/s for each driver: at least half of them in the window (a busy 2-core machine).
      drivers.forEach((d, i) => expect(statesOf(d.client) - counts[i]!, "state frames while the database is out").toBeGreaterThan((ms / 1000) * 30));
    };
    const cookie = drivers[0]!.cookie;
    expect((await call(h, "get", "/api/profiles", cookie)).status).toBe(200);

    // Paused: connections stay open and nothing answers.
    process.kill(pidOf(), "SIGSTOP");
    const paused = await call(h, "get", "/api/profiles", cookie).timeout(6000);
    expect(paused.status).toBe(503);
    expect(paused.body.error.code).toBe("database_unavailable");
    await movingFor(1500);
    process.kill(pidOf(), "SIGCONT");
    await until("the API answers again after the pause", async () => (await call(h, "get", "/api/profiles", cookie)).status === 200, 10_000);

    // Stopped: connections refused.
    await mariadb.stop();
    const stopped = await call(h, "get", "/api/profiles", cookie).timeout(6000);
    expect(stopped.status).toBe(503);
    expect(stopped.body.error.code).toBe("database_unavailable");
    await movingFor(2000);
    mariadb = await startPrivateMariadb({ name: NAME, port, database: DATABASE });
    await until("the API answers again after the restart", async () => (await call(h, "get", "/api/profiles", cookie)).status === 200, 15_000);

    // End both sessions; the writer flushes what it queued during the outage, then the summary.
    for (const d of drivers) await d.client.close();
    const received = drivers.map((d) => statesOf(d.client));
    const listed = await call(h, "get", "/api/recordings", cookie);
    for (const [i, d] of drivers.entries()) {
      const recordingId = (listed.body.recordings as { id: number; sessionId: string }[]).find((r) => r.sessionId === d.sessionId)!.id;
      let frames: RecordedFrame[] = [];
      let summary: { frames: number; droppedFrames: number } | null = null;
      await until(
        `recording ${recordingId} complete`,
        async () => {
          const res = await call(h, "get", `/api/recordings/${recordingId}`, cookie);
          if (res.status !== 200 || !res.body.recording.summary) return false;
          summary = res.body.recording.summary;
          frames = res.body.frames.map((f: unknown) => recordedFrameSchema.parse(f));
          return true;
        },
        15_000,
      );
      expect(summary!.droppedFrames).toBe(0);
      expect(frames.length).toBe(summary!.frames);
      // Every frame its driver received is recorded; the few more are the frames the simulation made while
      // the server was taking the close in (half a second at most, common practice, no source).
      expect(frames.length).toBeGreaterThanOrEqual(received[i]!);
      expect(frames.length - received[i]!).toBeLessThanOrEqual(30);
      // No hole in the time line: frames ~16.7 ms apart; nothing near the outages' seconds is missing.
      const gaps = frames.slice(1).map((f, k) => f.t - frames[k]!.t);
      expect(Math.max(...gaps)).toBeLessThan(0.25);
    }
  }, 90_000);
});
