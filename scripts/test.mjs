// `npm test`: the same set-up as `npm start` on a separate test database, then every suite — type
// checks, unit tests, API tests against the real MariaDB, browser tests in real Chromium against the
// real server — and one closing line with the totals: `N passed, N failed`.
import { spawn } from "node:child_process";
import { existsSync, mkdirSync, readdirSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import path from "node:path";
import { DATA_DIR, databaseEnv, log, portFromEnv, prepare, recreateDatabase, ROOT, SetupError, startPrivateRedis, startServerForRun } from "./lib/setup.mjs";

const REPORTS = path.join(DATA_DIR, "test-reports");
const results = [];

function record(name, passed, failed, note = "") {
  results.push({ name, passed, failed, note });
}

/**
 * Runs a command to its end without holding the event loop; with `buffered` its output is kept and printed
 * in one piece when it ends (jobs that run at the same time do not interleave their lines).
 */
function runJob(cmd, args, { cwd = ROOT, env = {}, buffered = false, onSpawn = () => {} } = {}) {
  return new Promise((resolve) => {
    const child = spawn(cmd, args, { cwd, env: { ...process.env, ...env }, stdio: buffered ? ["ignore", "pipe", "pipe"] : "inherit" });
    onSpawn(child);
    let output = "";
    if (buffered) {
      child.stdout.on("data", (d) => (output += d));
      child.stderr.on("data", (d) => (output += d));
    }
    child.on("error", (error) => resolve({ status: -1, output: `${output}\n${error.message}` }));
    child.on("close", (status) => {
      if (buffered && output) process.stdout.write(output.endsWith("\n") ? output : `${output}\n`);
      resolve({ status, output });
    });
  });
}

/**
 * Runs Vitest in `dir` (only the projects `args` names, if any) and reads its JSON report; a crash without a
 * report counts as one failure. True when tests ran (so the run's global set-up completed).
 */
async function vitestSuite(name, dir, env = {}, { buffered = false, args = [] } = {}) {
  const report = path.join(REPORTS, `${name.replace(/[^\w.-]+/g, "-")}.json`);
  rmSync(report, { force: true });
  log(`suite: ${name}`);
  const run = await runJob(
    path.join(ROOT, dir, "node_modules/.bin/vitest"),
    ["run", "--passWithNoTests", "--reporter=default", "--reporter=json", `--outputFile.json=${report}`, ...args],
    { cwd: path.join(ROOT, dir), env, buffered },
  );
  if (buffered) log(`suite ${name} ended (its output is above)`);
  if (!existsSync(report)) {
    record(name, 0, 1, `vitest ended (exit ${run.status}) without a report`);
    return false;
  }
  const json = JSON.parse(readFileSync(report, "utf8"));
  const failedSuites = (json.testResults ?? []).filter((f) => f.status === "failed" && (f.assertionResults ?? []).length === 0).length;
  record(name, json.numPassedTests, json.numFailedTests + failedSuites, failedSuites ? `${failedSuites} file(s) failed to load` : "");
  if (run.status !== 0 && json.numFailedTests + failedSuites === 0) record(`${name} (runner)`, 0, 1, `exit ${run.status}`);
  return json.numTotalTests > 0;
}

/**
 * Linux schedules each session (setsid) as a group of its own (autogroup), and a process's nice value
 * counts only inside its group. Playwright starts Chromium in a session of its own, so `nice` alone leaves
 * Chromium an equal share beside the whole of `npm test`: measured, the timed files took 81 s beside the
 * pages instead of 40. This gives every autogroup of `rootPid`'s descendants other than our own the nice
 * value `nice` (/proc/<pid>/autogroup, sched(7)); nothing where the kernel has no autogroups.
 */
function niceAutogroupsBelow(rootPid, nice) {
  const ownGroup = readProc("/proc/self/autogroup")?.split(" ")[0];
  if (!ownGroup) return;
  const children = new Map();
  for (const entry of readdirSync("/proc")) {
    if (!/^\d+$/.test(entry)) continue;
    const stat = readProc(`/proc/${entry}/stat`);
    const ppid = stat ? Number(stat.slice(stat.lastIndexOf(")") + 2).split(" ")[1]) : NaN;
    if (!Number.isInteger(ppid)) continue;
    if (!children.has(ppid)) children.set(ppid, []);
    children.get(ppid).push(Number(entry));
  }
  const pending = [...(children.get(rootPid) ?? [])];
  while (pending.length) {
    const pid = pending.pop();
    pending.push(...(children.get(pid) ?? []));
    const [group, , value] = readProc(`/proc/${pid}/autogroup`)?.trim().split(" ") ?? [];
    if (!group || group === ownGroup || Number(value) === nice) continue;
    try {
      writeFileSync(`/proc/${pid}/autogroup`, String(nice));
    } catch {
      // gone, or not ours to change: it keeps its share
    }
  }
}

function readProc(file) {
  try {
    return readFileSync(file, "utf8");
  } catch {
    return null;
  }
}

/**
 * One project of the browser tests: `playwright test --project <project>` in tests/ (tests/playwright.config.ts:
 * "pages", then "driving", each one test at a time), read from its JSON report. A crash without a report,
 * or an error outside any test (a config or file that does not load), counts as one failure. Traces and
 * screenshots of failed tests stay in .data/test-reports/browser/<project>/.
 */
async function playwrightSuite(name, project, env = {}, { buffered = false, nice = 0 } = {}) {
  const report = path.join(REPORTS, `browser-${project}.json`);
  rmSync(report, { force: true });
  log(`suite: ${name}`);
  const dir = path.join(ROOT, "tests");
  const playwright = [path.join(dir, "node_modules/.bin/playwright"), "test", "--project", project];
  // `nice -n N`: the runner and the Chromium it starts take the cores only when nothing else wants them.
  const [cmd, ...args] = nice ? ["nice", "-n", String(nice), ...playwright] : playwright;
  let timer = null;
  const run = await runJob(cmd, args, {
    cwd: dir,
    env: { ...env, BROWSER_TEST_REPORT: report },
    buffered,
    onSpawn: (child) => {
      if (nice) timer = setInterval(() => niceAutogroupsBelow(child.pid, nice), 500);
    },
  });
  if (timer) clearInterval(timer);
  if (buffered) log(`suite ${name} ended (its output is above)`);
  if (!existsSync(report)) {
    record(name, 0, 1, `playwright ended (exit ${run.status}) without a report`);
    return;
  }
  const { stats = {}, errors = [] } = JSON.parse(readFileSync(report, "utf8"));
  const passed = (stats.expected ?? 0) + (stats.flaky ?? 0);
  const failed = (stats.unexpected ?? 0) + errors.length;
  record(name, passed, failed, errors.length ? `${errors.length} error(s) outside the tests` : "");
  if (run.status !== 0 && failed === 0) record(`${name} (runner)`, 0, 1, `exit ${run.status}`);
}

async function typecheckSuite() {
  log("suite: typecheck (tsc --noEmit in every package)");
  const run = await runJob("pnpm", ["-r", "--no-bail", "typecheck"], { buffered: true });
  log("typecheck ended (its output is above)");
  record("typecheck", run.status === 0 ? 1 : 0, run.status === 0 ? 0 : 1);
}

/**
 * ESLint over the workspace (eslint.config.js: boundaries, cycles, hooks): one pass, or one failure on any
 * problem. With ESLint's cache (node_modules/.cache/eslint, by file content and configuration): a run
 * after a small change lints only the files that changed, which made lint the longest of the side-by-side
 * checks (45 s there, 4 Dec 2026). A clean clone (CI) has no cache and lints everything. The import-cycle
 * and boundary rules look across files, but they report on the importing file, which is the one that
 * changed; `pnpm lint` lints everything without the cache.
 */
async function lintSuite() {
  log("suite: lint (eslint .)");
  const cache = ["--cache", "--cache-strategy", "content", "--cache-location", path.join(ROOT, "node_modules/.cache/eslint/")];
  const run = await runJob("pnpm", ["lint", "--max-warnings", "0", ...cache], { buffered: true });
  log("lint ended (its output is above)");
  record("lint", run.status === 0 ? 1 : 0, run.status === 0 ? 0 : 1);
}

/** The console's production build (vite build into apps/console/dist), which the browser tests load. */
async function buildConsoleJob() {
  log("building the console");
  const run = await runJob("pnpm", ["--filter", "@jogwright/console", "build"], { buffered: true });
  if (run.status !== 0) throw new SetupError(`building the console failed (exit ${run.status}); its output is above.`);
  log("console built");
}

async function main() {
  mkdirSync(REPORTS, { recursive: true });
  const db = await prepare({ withChromium: true, withRedis: true, dbName: "mariadb-test", defaultDbPort: 3408, database: "jogwright_test", throwaway: true });
  if (db.socket) recreateDatabase(db.socket, "jogwright_test");
  // The API tests and the server run as the runtime account; the migrations run as the migration account.
  const dbEnv = databaseEnv(db);
  let server = null;
  let redis = null;
  try {
    // The checks and tests that need no database, and the console build, run side by side (each job's
    // output printed whole when it ends): on the 2-core machine this takes about half the time of running
    // them one after another, and none of them measures time. The browser tests' server starts as soon as
    // the console it serves is built (it migrates and seeds the test database, about 6 s, here rather than
    // between the server's tests and the browser tests); it waits, idle, while the server's tests run on
    // databases of their own. The server's fault files (Vitest project "faults": a database outage, the
    // real MariaDB paused and stopped, two instances sharing a Redis) run beside them too: their bounds are
    // seconds, not milliseconds, and their waits on outages and timeouts overlap the checks' work instead of
    // following it (DEVELOPERS.md, "What makes `npm test` take the time it does"). The files that measure
    // milliseconds ("timed") run later, with only lowest-priority work beside them.
    // The scale-out tests (two instances sharing a Redis) get REDIS_TEST_URL; every other test runs embedded.
    redis = await startPrivateRedis({ name: "redis-test", port: portFromEnv("REDIS_TEST_PORT", 6408) });
    const serverTestEnv = { ...dbEnv, NODE_ENV: "test", REDIS_TEST_URL: redis.url };
    let templateReady = false;
    const jobs = await Promise.allSettled([
      typecheckSuite(),
      lintSuite(),
      (async () => {
        await vitestSuite("kinematics", "packages/kinematics", {}, { buffered: true });
        await vitestSuite("shared", "packages/shared", {}, { buffered: true });
        await vitestSuite("console", "apps/console", {}, { buffered: true });
      })(),
      (async () => {
        templateReady = await vitestSuite("server: faults (on MariaDB and Redis)", "apps/server", serverTestEnv, { buffered: true, args: ["--project", "faults"] });
      })(),
      (async () => {
        await buildConsoleJob();
        server = await startServerForRun({
          what: "the test server",
          port: portFromEnv("TEST_PORT", 3100),
          portVar: "TEST_PORT",
          env: { ...dbEnv, MAIL_DIR: path.join(DATA_DIR, "mail-test"), SMTP_PORT: String(portFromEnv("TEST_SMTP_PORT", 2626)), NODE_ENV: "test" },
        });
      })(),
    ]);
    for (const job of jobs) if (job.status === "rejected") throw job.reason;
    // The fault run migrated and seeded the template every test file's database is copied from; these runs
    // copy it as it is (global-setup.ts) instead of making it again.
    const serverRunEnv = { ...serverTestEnv, ...(templateReady ? { JOGWRIGHT_TEST_TEMPLATE: "ready" } : {}) };
    await vitestSuite("server: unit and API (on MariaDB)", "apps/server", serverRunEnv, { args: ["--project", "unit", "--project", "api"] });
    await redis.stop();
    redis = null;

    // The files that measure milliseconds ("timed": the jog socket at 1 kHz against its 200 ms watchdog)
    // leave the cores about half idle; the browser tests that do not drive the arm ("pages") fill that
    // time at the lowest priority (nice 19), so the scheduler gives the timed files a core whenever they
    // want one, and the pages go on at full speed once they end. The tests that drive the arm ("driving")
    // run after both, alone.
    const browserEnv = { ...dbEnv, JOGWRIGHT_URL: server.url, CHROMIUM_PATH: "/usr/bin/chromium" };
    await Promise.all([
      vitestSuite("server: timed (on MariaDB)", "apps/server", serverRunEnv, { args: ["--project", "timed"] }),
      playwrightSuite("browser: pages", "pages", browserEnv, { buffered: true, nice: 19 }),
    ]);
    await playwrightSuite("browser and whole-system: driving (one at a time)", "driving", browserEnv);
  } finally {
    await server?.stop();
    if (redis) await redis.stop();
    if (db.socket) await db.stop();
  }
}

function summary() {
  console.log("\nSuites:");
  for (const r of results) console.log(`  ${r.failed ? "FAIL" : "ok  "} ${r.name}: ${r.passed} passed, ${r.failed} failed${r.note ? ` (${r.note})` : ""}`);
  const passed = results.reduce((s, r) => s + r.passed, 0);
  const failed = results.reduce((s, r) => s + r.failed, 0);
  console.log(`${passed} passed, ${failed} failed`);
  return failed;
}

main()
  .then(() => process.exit(summary() > 0 ? 1 : 0))
  .catch((error) => {
    console.error(`[jogwright] tests could not run: ${error instanceof SetupError ? error.message : error?.stack ?? error}`);
    record("set-up", 0, 1, "see the message above");
    summary();
    process.exit(1);
  });
