/**
 * The server half of the jog load benchmark (started by jog-load.ts as a child process so the clients do
 * not share its event loop): the real app on the real database (DATABASE_URL), with the jog WebSocket,
 * on an ephemeral loopback port. Creates a bench engineer, an operator and a profile at a 1 kHz tick rate
 * through the profiles service, then reports {port, cookie, versionId} over IPC and answers "reset" and
 * "stats" requests (the simulation thread's tick lateness histogram, CPU use of the whole process).
 */
import http from "node:http";
import type { AddressInfo } from "node:net";
import { monitorEventLoopDelay, performance } from "node:perf_hooks";
import { defaultProfileParams } from "@jogwright/shared";
import { createApp } from "../src/app.ts";
import { loadConfig } from "../src/config.ts";
import { createSequelize } from "../src/db/connection.ts";
import { prepareDatabase } from "../src/db/prepare.ts";
import { listArms } from "../src/modules/arms/service.ts";
import { attachJogSockets } from "../src/modules/jog/socket.ts";
import { createProfile } from "../src/modules/versions/service.ts";
import { createUser } from "../src/modules/users/service.ts";

// One bench account drives up to 100 sessions, started back to back: the caps and the start rate are raised
// for it (the environment can still set them).
const config = loadConfig({
  JOG_MAX_SESSIONS_PER_ACCOUNT: "100", JOG_STARTS_PER_WINDOW: "1000", ...process.env, SEED_DEMO: "0", FAKE_SMTP: "0",
});
const db = createSequelize(config.databaseUrl);
// Migrate as the migration account, grant the runtime account, seed: the demo arms (and accounts) are what
// the bench profiles run on; idempotent.
await prepareDatabase(config, db, { seed: true });
const { app, ctx } = createApp(config, db);
const server = http.createServer(app);
const jog = attachJogSockets(server, ctx);
await new Promise<void>((resolve) => server.listen(0, "127.0.0.1", resolve));
const { port } = server.address() as AddressInfo;
// The ephemeral port is known only now: the clients' Origin is this address (PUBLIC_ORIGIN cannot say it).
ctx.config.allowedOrigins.push(`http://127.0.0.1:${port}`);

const stamp = `b${Date.now().toString(36)}`;
const engineer = await createUser(db, { username: `${stamp}e`, displayName: `Bench engineer ${stamp}`, email: `${stamp}e@bench.example`, password: "bench-password-1", roles: ["engineer"] });
const operator = await createUser(db, { username: `${stamp}o`, displayName: `Bench operator ${stamp}`, email: `${stamp}o@bench.example`, password: "bench-password-1", roles: ["operator"] });
const arm = (await listArms(db)).find((a) => a.model.joints.length === 6)!;
const params = { ...defaultProfileParams(arm.model.joints.map((j) => j.maxSpeed!)), tickRateHz: 1000 };
const profile = await createProfile(ctx, engineer, { name: `Bench 1 kHz ${stamp}`, operatorId: operator.id, armId: arm.id, params, note: "load benchmark" });
const session = await ctx.lucia.createSession(engineer.id, {});

// How long the main thread's event loop was held up (GC pauses, long tasks): every frame and input waits that long.
const loopDelay = monitorEventLoopDelay({ resolution: 1 });
loopDelay.enable();
let cpuAt = process.cpuUsage();
let wallAt = performance.now();
process.on("message", async (msg: { type: string }) => {
  const hub = jog.hub;
  if (msg.type === "reset") {
    // The tick lateness histogram lives on the simulation thread: read-and-reset there.
    await hub.simulationStats(true);
    loopDelay.reset();
    cpuAt = process.cpuUsage();
    wallAt = performance.now();
    process.send!({ type: "reset-done" });
  } else if (msg.type === "stats") {
    // process.cpuUsage counts every thread of the process (main and simulation).
    const cpu = process.cpuUsage(cpuAt);
    const wallMs = performance.now() - wallAt;
    const sim = await hub.simulationStats();
    process.send!({
      type: "stats",
      sessions: hub.sessions.size,
      ticks: sim?.ticks ?? 0,
      latenessP50Ms: sim?.latenessP50Ms ?? NaN,
      latenessP99Ms: sim?.latenessP99Ms ?? NaN,
      latenessP999Ms: sim?.latenessP999Ms ?? NaN,
      latenessMaxMs: sim?.latenessMaxMs ?? NaN,
      overrunTicks: sim?.overrunTicks ?? 0,
      stalledMs: sim?.stalledMs ?? 0,
      wakes: sim?.wakes ?? 0,
      nice: sim?.nice ?? null,
      realtimePriority: sim?.realtimePriority ?? null,
      realtimeNote: sim?.realtimeNote ?? null,
      // Read while the sessions run: the server's group is favoured only then.
      autogroup: hub.autogroup.describe(),
      autogroupNice: hub.autogroup.currentNice(),
      loopDelayP99Ms: loopDelay.percentile(99) / 1e6,
      loopDelayMaxMs: loopDelay.max / 1e6,
      cpuPercent: ((cpu.user + cpu.system) / 1000 / wallMs) * 100,
      recordingFailures: hub.writer.failures,
      chunksWritten: hub.writer.chunksWritten,
    });
  } else if (msg.type === "close") {
    await jog.close();
    server.closeAllConnections();
    server.close();
    await db.close();
    process.exit(0);
  }
});
// Started in a session of its own (jog-load.ts), a Ctrl-C at the terminal does not reach it: it ends with its parent.
process.on("disconnect", () => process.exit(1));
process.send!({ type: "ready", port, cookie: `jogwright_session=${session.id}`, versionId: profile.latestVersion.id });
