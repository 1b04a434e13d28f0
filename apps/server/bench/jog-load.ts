/**
 * Live-jogging load benchmark (issue 4): N concurrent sessions at a 1 kHz tick rate against the real
 * server (child process, real DB, loopback only), each client streaming inputs at 60–120 Hz with the
 * enabling control held. Prints per-client frames/s (min/median), tick lateness p50/p99 (server
 * histogram), input-to-state latency p50/p99 (client clock: send time of input seq → arrival of the first
 * state frame with lastInputSeq ≥ seq) and CPU use. Bounded: JOG_BENCH_CLIENTS (default 50, max 100),
 * JOG_BENCH_SECONDS (default 20, max 60). JOG_BENCH_SERVER_FLAGS: extra node/V8 flags for the server's
 * process, space-separated (e.g. "--single-threaded-gc"), to compare runtime settings.
 *   DATABASE_URL=… pnpm --filter @jogwright/server bench
 */
import { fork } from "node:child_process";
import path from "node:path";
import { monitorEventLoopDelay, performance } from "node:perf_hooks";
import { JogTestClient, sleep } from "../src/modules/jog/jog-test-client.ts";

const CLIENTS = Math.min(100, Math.max(1, Number(process.env.JOG_BENCH_CLIENTS ?? 50)));
const SECONDS = Math.min(60, Math.max(2, Number(process.env.JOG_BENCH_SECONDS ?? 20)));
const WARMUP_MS = 1500;

type Ready = { type: "ready"; port: number; cookie: string; versionId: number };
// detached: the server leads a session of its own, as under `npm start`, so it may favour its autogroup
// while sessions run (modules/jog/autogroup.ts); SERVER_AUTOGROUP_NICE=0 measures it without.
const child = fork(path.join(import.meta.dirname, "jog-server.ts"), [], { detached: true, execArgv: ["--import", "tsx", ...(process.env.JOG_BENCH_SERVER_FLAGS ?? "").split(" ").filter(Boolean)], stdio: ["ignore", "inherit", "inherit", "ipc"] });
const messages: { type: string; [k: string]: unknown }[] = [];
const waiting: ((m: { type: string }) => void)[] = [];
child.on("message", (m: { type: string }) => {
  const w = waiting.shift();
  if (w) w(m);
  else messages.push(m);
});
const nextMessage = () => new Promise<{ type: string; [k: string]: unknown }>((resolve) => {
  const m = messages.shift();
  if (m) resolve(m);
  else waiting.push(resolve as (m: { type: string }) => void);
});
const ask = async (type: string) => {
  child.send({ type });
  return nextMessage();
};

const quantile = (xs: number[], p: number) => {
  if (xs.length === 0) return NaN;
  const s = [...xs].sort((a, b) => a - b);
  return s[Math.min(s.length - 1, Math.max(0, Math.ceil(p * s.length) - 1))]!;
};

const ready = (await nextMessage()) as unknown as Ready;
const url = `ws://127.0.0.1:${ready.port}/ws/jog`;
const origin = `http://127.0.0.1:${ready.port}`;
console.log(`jog-load: ${CLIENTS} clients × ${SECONDS} s at 1 kHz ticks, server pid ${child.pid} on ${url}`);

const clients: JogTestClient[] = [];
const latencies: number[] = [];
const frameCounts: number[] = [];
let measuring = false;
for (let i = 0; i < CLIENTS; i++) {
  const c = await JogTestClient.connect(url, { Cookie: ready.cookie, Origin: origin });
  const idx = i;
  frameCounts.push(0);
  let matched = -1;
  // Lean: state frames are not parsed, only their lastInputSeq read (jog-test-client.ts says why).
  c.onStateSeq = (lastInputSeq, at) => {
    if (measuring) frameCounts[idx]!++;
    for (let s = matched + 1; s <= lastInputSeq; s++) {
      const sent = c.sentAt.get(s);
      if (sent !== undefined) {
        if (measuring) latencies.push(at - sent);
        c.sentAt.delete(s);
      }
    }
    if (lastInputSeq > matched) matched = lastInputSeq;
  };
  c.send({ type: "start", versionId: ready.versionId });
  await c.next((m) => m.type === "session" || m.type === "error");
  clients.push(c);
}
// Keep the messages arrays from growing over the run (the client keeps them for tests).
for (const c of clients) c.messages.length = 0;

const cpuClient0 = process.cpuUsage();
for (const [i, c] of clients.entries()) {
  const periodMs = 1000 / (60 + (60 * i) / Math.max(1, CLIENTS - 1)); // 60 … 120 Hz
  c.input = { enabling: false, mode: "cartesian", frame: "world", axes: [0, 0, 0, 0, 0, 0], overridePercent: 30 };
  c.sendInput();
  const phase = (2 * Math.PI * i) / CLIENTS;
  c.input = { ...c.input, enabling: true };
  // A slow circle in the horizontal plane (bounded motion, away from limits): 4 s period.
  const timer = setInterval(() => {
    const w = (2 * Math.PI * performance.now()) / 4000 + phase;
    c.input.axes = [0.5 * Math.cos(w), 0.5 * Math.sin(w), 0, 0, 0, 0];
    c.sendInput();
    if (c.messages.length > 1000) c.messages.length = 0;
  }, periodMs);
  (c as unknown as { timer: NodeJS.Timeout }).timer = timer;
}
await sleep(WARMUP_MS);
await ask("reset");
latencies.length = 0;
frameCounts.fill(0);
// The clients' own event loop: a frame that waited here counts in the input-to-state latency too.
const clientLoopDelay = monitorEventLoopDelay({ resolution: 1 });
clientLoopDelay.enable();
measuring = true;
const t0 = performance.now();
await sleep(SECONDS * 1000);
measuring = false;
clientLoopDelay.disable();
const elapsedS = (performance.now() - t0) / 1000;
const stats = await ask("stats");
const cpuClient = process.cpuUsage(cpuClient0);
for (const c of clients) clearInterval((c as unknown as { timer: NodeJS.Timeout }).timer);
await Promise.all(clients.map((c) => c.close()));
await sleep(200);
// The server ends its sessions and flushes their recordings on "close", then exits: wait for that (at most
// 30 s), so whoever runs this does not stop the database under the last chunks (seen on a slow run: the
// recordings' final writes were refused once `pnpm bench` had moved on).
const childExited = new Promise<void>((resolve) => child.once("exit", () => resolve()));
child.send({ type: "close" });

const fps = frameCounts.map((n) => n / elapsedS);
const fmt = (v: number, d = 2) => (Number.isFinite(v) ? v.toFixed(d) : "n/a");
console.log(`sessions live at the end: ${stats.sessions}; ticks measured: ${stats.ticks}; overrun (skipped) ticks: ${stats.overrunTicks}; simulation-thread wakes: ${stats.wakes}; stalls counted: ${fmt(stats.stalledMs as number, 1)} ms; simulation thread nice: ${stats.nice ?? "normal priority (JOG_SIM_NICE=0 or not permitted)"}`);
console.log(`scheduling: simulation thread ${stats.realtimePriority !== null ? `SCHED_RR priority ${stats.realtimePriority as number}` : `normal (${stats.realtimeNote as string})`}; ${stats.autogroup as string} (now: nice ${stats.autogroupNice ?? "n/a"})`);
console.log(`frames per second per client: min ${fmt(Math.min(...fps), 1)}, median ${fmt(quantile(fps, 0.5), 1)}, max ${fmt(Math.max(...fps), 1)} (60 on the grid, up to 120 with frames sent at once after changed inputs)`);
console.log(`tick lateness: p50 ${fmt(stats.latenessP50Ms as number)} ms, p99 ${fmt(stats.latenessP99Ms as number)} ms, p99.9 ${fmt(stats.latenessP999Ms as number)} ms, max ${fmt(stats.latenessMaxMs as number)} ms (target p99 ≤ 2 ms)`);
console.log(`input-to-state latency: p50 ${fmt(quantile(latencies, 0.5))} ms, p90 ${fmt(quantile(latencies, 0.9))} ms, p99 ${fmt(quantile(latencies, 0.99))} ms, p99.9 ${fmt(quantile(latencies, 0.999))} ms over ${latencies.length} inputs, each changing the command (target p99 ≤ 10 ms, issue 11)`);
console.log(`event-loop delay: server main thread p99 ${fmt(stats.loopDelayP99Ms as number)} ms, max ${fmt(stats.loopDelayMaxMs as number)} ms; clients p99 ${fmt(clientLoopDelay.percentile(99) / 1e6)} ms, max ${fmt(clientLoopDelay.max / 1e6)} ms (perf_hooks.monitorEventLoopDelay, 1 ms resolution)`);
console.log(`CPU: server ${fmt(stats.cpuPercent as number, 0)} % of one core; clients ${fmt(((cpuClient.user + cpuClient.system) / 1000 / (elapsedS * 1000 + WARMUP_MS)) * 100, 0)} % of one core`);
console.log(`recording: ${stats.chunksWritten} chunks written, ${stats.recordingFailures} failed writes`);
await Promise.race([childExited, sleep(30_000)]);
process.exit(0);
