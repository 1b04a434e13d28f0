import { spawn, spawnSync, type ChildProcess } from "node:child_process";
import { existsSync, readdirSync, readFileSync } from "node:fs";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { driveVersionsResponseSchema } from "@jogwright/shared";
import { DEMO_PASSWORD } from "./db/seed.ts";
import { JogTestClient } from "./modules/jog/jog-test-client.ts";
import { hasCapSysNice } from "./test/capabilities.ts";
import { freePort } from "./test/free-port.ts";

// The whole server as `npm start` runs it (scripts/start.mjs): node itself, in a session of its own, on this
// file's database. Its autogroup (modules/jog/autogroup.ts) and the simulation thread's real-time
// scheduling (modules/jog/realtime.ts) are the kernel's, read back from /proc and util-linux's chrt. Needs
// autogroups and CAP_SYS_NICE, as `npm test` has them here (root).
describe.runIf(existsSync("/proc/self/autogroup") && hasCapSysNice())("the server as npm start runs it, in a session of its own", () => {
  let server: ChildProcess;
  let exited: Promise<void>;
  let out = "";
  let port = 0;
  let origin = "";

  beforeAll(async () => {
    port = await freePort();
    origin = `http://127.0.0.1:${port}`;
    server = spawn(process.execPath, ["--import", "tsx", "src/server.ts"], {
      cwd: path.resolve(import.meta.dirname, ".."),
      detached: true,
      stdio: ["ignore", "pipe", "pipe"],
      env: {
        PATH: process.env.PATH ?? "",
        DATABASE_URL: process.env.DATABASE_URL!,
        ...(process.env.MIGRATION_DATABASE_URL ? { MIGRATION_DATABASE_URL: process.env.MIGRATION_DATABASE_URL } : {}),
        PORT: String(port),
        SMTP_PORT: "0",
        SEED_DEMO: "1",
        NODE_ENV: "test",
      },
    });
    server.stdout!.on("data", (d) => (out += d));
    server.stderr!.on("data", (d) => (out += d));
    exited = new Promise((resolve) => server.once("exit", () => resolve()));
    // Up once /api/health answers (it migrates and seeds its database first).
    const until = Date.now() + 45_000;
    while ((await fetch(`${origin}/api/health`).catch(() => null))?.status !== 200) {
      if (Date.now() > until || server.exitCode !== null) throw new Error(`the server did not come up:\n${out}`);
      await new Promise((r) => setTimeout(r, 250));
    }
  }, 60_000);

  afterAll(async () => {
    server.kill("SIGTERM");
    await exited;
  });

  const group = () => readFileSync(`/proc/${server.pid}/autogroup`, "utf8").trim();
  /** The ids of the server's threads that run under SCHED_RR. */
  const realtimeThreads = () =>
    readdirSync(`/proc/${server.pid}/task`).filter((tid) => spawnSync("chrt", ["--pid", tid], { encoding: "utf8" }).stdout.includes("SCHED_RR"));

  it("says how it schedules, favours its autogroup and ticks under SCHED_RR while a session runs, and gives the favour back after", async () => {
    expect(out).toMatch(/Scheduling: while live sessions run, the server's autogroup runs at nice -10 \(at 0 otherwise\)/);
    expect(group()).toMatch(/^\/autogroup-\d+ nice 0$/);

    const signIn = await fetch(`${origin}/api/auth/sign-in`, {
      method: "POST",
      headers: { "content-type": "application/json", origin },
      body: JSON.stringify({ username: "olena", password: DEMO_PASSWORD }),
    });
    expect(signIn.status).toBe(200);
    const cookie = signIn.headers.getSetCookie().map((c) => c.split(";")[0]).join("; ");
    const { versions } = driveVersionsResponseSchema.parse(await (await fetch(`${origin}/api/drive/versions`, { headers: { cookie } })).json());
    expect(versions.length).toBeGreaterThan(0);

    const driver = await JogTestClient.connect(`ws://127.0.0.1:${port}/ws/jog`, { Cookie: cookie, Origin: origin });
    driver.send({ type: "start", versionId: versions[0]!.id });
    await driver.next((m) => m.type === "session");
    await driver.nextState();
    expect(group()).toMatch(/ nice -10$/);
    expect(realtimeThreads()).toHaveLength(1); // the simulation thread, and no other

    // The driver leaves: the session ends, and with no session left the group is back at its own value.
    await driver.close();
    await expect.poll(group, { timeout: 10_000 }).toMatch(/ nice 0$/);
  });
});
