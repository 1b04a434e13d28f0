import { defineConfig } from "vitest/config";

// API tests on the real MariaDB (DATABASE_URL, set by `npm test`). Each file that touches the database runs
// on a database of its own, created, migrated and seeded for it (src/test/fresh-database.ts) and dropped
// afterwards, so files share no data and may run at the same time. Four groups, one after the other in a
// plain `vitest run` (`npm test` runs "faults" in a run of its own beside the type check, lint and build,
// then "unit" and "api", then "timed" beside the browser tests that do not drive the arm, which run at the
// lowest priority: scripts/test.mjs):
// - "unit": files with no database and no server (the simulation, the scheduler, trials, codecs, the
//   upload parser, configuration), two at a time, without a database copy (about 2.5 s of set-up saved per
//   file);
// - "faults": the fault files (answers within 2 s under a database outage, the real MariaDB paused and
//   stopped, two instances sharing a Redis), all three at once: each waits out a timeout or an outage
//   (about 10 s each) between bursts of work (a private MariaDB, two server instances: the cores were
//   96–99 % busy while the three ran alone), and their bounds are seconds (28–31 s together, ~40 s in turn);
// - "timed": the files that measure milliseconds (the jog socket at 1 kHz against its 200 ms watchdog),
//   one file at a time so no other file competes for the 2 cores;
// - "api": everything else, two files at a time (measured on 14 of these files: 53 s one at a time,
//   35 s two at a time). startup.test.ts is here: it checks start-up refusals, not time.
// "unit", "timed" and "api" run with `isolate: false`: the files of a worker share its module cache, so the
// server's modules are imported once per worker, not once per file (measured 4 Dec 2026 on this machine:
// "api" 127 → 82 s, "timed" 48 → 41 s, "unit" 15 → 11 s). Each file still gets its own database (the slot
// is claimed with a named lock, not VITEST_POOL_ID) and builds its own harness; what a module keeps between
// files is keyed by the app context, the Sequelize instance or the harness (WeakMaps), and a file that
// starts the trial pool closes it. A test that spies on a global restores it.
const UNIT = [
  "src/config.test.ts",
  "src/modules/jog/simulation.test.ts",
  "src/modules/jog/scheduler.test.ts",
  "src/modules/jog/recheck-rota.test.ts",
  "src/modules/jog/autogroup.test.ts",
  "src/modules/jog/realtime.test.ts",
  "src/modules/trials/trials.test.ts",
  "src/modules/trials/trial-definitions.test.ts",
  "src/modules/trials/bench-analysis.test.ts",
  "src/modules/recordings/chunk-codec.test.ts",
  "src/modules/recordings/frame-log.test.ts",
  "src/modules/arms/upload.test.ts",
];
const FAULTS = ["src/db/database-outage.test.ts", "src/db/mariadb-fault.test.ts", "src/scale/**/*.test.ts"];
const TIMED = ["src/modules/jog/**/*.test.ts"];

export default defineConfig({
  test: {
    globalSetup: ["src/test/global-setup.ts"],
    testTimeout: 20_000,
    hookTimeout: 30_000,
    projects: [
      {
        extends: true,
        test: { name: "unit", include: UNIT, maxWorkers: 2, isolate: false, sequence: { groupOrder: 0 } },
      },
      {
        extends: true,
        test: { name: "faults", include: FAULTS, setupFiles: ["src/test/fresh-database.ts"], maxWorkers: FAULTS.length, sequence: { groupOrder: 1 } },
      },
      {
        extends: true,
        test: { name: "timed", include: TIMED, exclude: UNIT, setupFiles: ["src/test/fresh-database.ts"], fileParallelism: false, isolate: false, sequence: { groupOrder: 2 } },
      },
      {
        extends: true,
        test: { name: "api", include: ["src/**/*.test.ts"], exclude: [...FAULTS, ...TIMED, ...UNIT], setupFiles: ["src/test/fresh-database.ts"], maxWorkers: 2, isolate: false, sequence: { groupOrder: 3 } },
      },
    ],
  },
});
