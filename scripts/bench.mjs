// `pnpm bench` (or `npm run bench`): every benchmark of the project, each printing medians and ratios.
// Not tests: figures depend on the machine and its load (check `uptime` first). Uses the private test
// MariaDB (its own database, jogwright_bench) and the same set-up as `npm test`.
import { spawnSync } from "node:child_process";
import path from "node:path";
import { buildConsole, DATA_DIR, databaseEnv, log, portFromEnv, prepare, ROOT, SetupError, startServerForRun } from "./lib/setup.mjs";

function run(what, cmd, args, cwd, env = {}) {
  log(`benchmark: ${what}`);
  const r = spawnSync(cmd, args, { cwd: path.join(ROOT, cwd), stdio: "inherit", env: { ...process.env, ...env } });
  if (r.status !== 0) log(`${what} ended with exit ${r.status}`);
}

async function main() {
  const db = await prepare({ withChromium: true, dbName: "mariadb-test", defaultDbPort: 3408, database: "jogwright_bench" });
  let server = null;
  try {
    run("kinematics control step", "pnpm", ["bench"], "packages/kinematics");
    run("tuning bench: a 10-s trial at 1 kHz, a 100-point sweep over 6 trials, 200 × 200 singularity maps", path.join(ROOT, "apps/server/node_modules/.bin/tsx"), ["bench/tuning-bench.ts"], "apps/server");
    run("live jogging load (50 sessions at 1 kHz)", path.join(ROOT, "apps/server/node_modules/.bin/tsx"), ["bench/jog-load.ts"], "apps/server", databaseEnv(db));

    buildConsole();
    server = await startServerForRun({
      what: "the benchmark server",
      port: portFromEnv("BENCH_PORT", 3110),
      portVar: "BENCH_PORT",
      env: { ...databaseEnv(db), SMTP_PORT: "0", MAIL_DIR: path.join(DATA_DIR, "mail-bench"), NODE_ENV: "test" },
    });
    run("drive page frame rate in headless Chromium", path.join(ROOT, "apps/server/node_modules/.bin/tsx"), ["bench/drive-fps.ts"], "tests", { JOGWRIGHT_URL: server.url });
  } finally {
    await server?.stop();
    if (db.owned) await db.stop();
  }
}

main().catch((error) => {
  console.error(`[jogwright] benchmarks could not run: ${error instanceof SetupError ? error.message : (error?.stack ?? error)}`);
  process.exit(1);
});
