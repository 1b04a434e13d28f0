import { defineConfig } from "vitest/config";

// API tests on the real MariaDB (DATABASE_URL, set by `npm test`). Each test file runs on a database of
// its own, created, migrated and seeded for it (src/test/fresh-database.ts) and dropped afterwards, so
// files share no data and may run at the same time. Two groups, one after the other:
// - "timed": files that measure wall-clock time (the jog socket at 1 kHz, answers within 2 s under a
//   database outage, the real MariaDB paused and stopped, server start-up), one file at a time so no other file competes for the 2 cores;
// - "api": everything else, two files at a time (measured on 14 of these files: 53 s one at a time,
//   35 s two at a time).
const TIMED = ["src/modules/jog/**/*.test.ts", "src/db/database-outage.test.ts", "src/db/mariadb-fault.test.ts", "src/scale/**/*.test.ts", "src/startup.test.ts"];

export default defineConfig({
  test: {
    globalSetup: ["src/test/global-setup.ts"],
    setupFiles: ["src/test/fresh-database.ts"],
    testTimeout: 20_000,
    hookTimeout: 30_000,
    projects: [
      {
        extends: true,
        test: { name: "timed", include: TIMED, fileParallelism: false, sequence: { groupOrder: 0 } },
      },
      {
        extends: true,
        test: { name: "api", include: ["src/**/*.test.ts"], exclude: TIMED, maxWorkers: 2, sequence: { groupOrder: 1 } },
      },
    ],
  },
});
