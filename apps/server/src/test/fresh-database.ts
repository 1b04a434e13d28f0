import { afterAll } from "vitest";
import { loadConfig } from "../config.ts";
import { createSequelize } from "../db/connection.ts";
import { prepareDatabase } from "../db/prepare.ts";
import { accountOf, scratchDatabase, withMigrationAccount } from "./scratch-databases.ts";

/**
 * Vitest `setupFiles` entry: runs in each test file's process before the file is imported. The file gets
 * a database of its own, `<base>_<slot>` (scratch-databases.ts; files running at the same time have
 * different slots): created afresh, the runtime account granted its database privileges, then migrated,
 * granted and seeded by prepareDatabase exactly as the server does on boot. DATABASE_URL and
 * MIGRATION_DATABASE_URL then name it, so every harness, owner connection and child server of the file
 * uses it; it is dropped after the file. No test sees what another file did.
 */
const base = process.env.DATABASE_URL;
if (!base) throw new Error("DATABASE_URL is not set: run the API tests through `npm test`, which starts the test MariaDB.");
const migrationBase = process.env.MIGRATION_DATABASE_URL || base;
const database = scratchDatabase(decodeURIComponent(new URL(base).pathname.slice(1)), process.env.VITEST_POOL_ID ?? "1");

const onDatabase = (url: string) => {
  const u = new URL(url);
  u.pathname = `/${database}`;
  return u.toString();
};

// The runtime account cannot even connect to a database it holds nothing on: it gets its database
// privileges here (npm test grants them on the base database); prepareDatabase grants its table privileges.
const [runtime, owner] = await Promise.all([accountOf(base), accountOf(migrationBase)]);
await withMigrationAccount(migrationBase, database, async (sql) => {
  await sql(`DROP DATABASE IF EXISTS \`${database}\``);
  await sql(`CREATE DATABASE \`${database}\` CHARACTER SET utf8mb4 COLLATE utf8mb4_unicode_ci`);
  if (runtime !== owner) await sql(`GRANT SELECT, INSERT, UPDATE ON \`${database}\`.* TO ${runtime}`);
});
process.env.DATABASE_URL = onDatabase(base);
if (process.env.MIGRATION_DATABASE_URL) process.env.MIGRATION_DATABASE_URL = onDatabase(process.env.MIGRATION_DATABASE_URL);

const config = loadConfig(process.env);
const db = createSequelize(config.databaseUrl);
try {
  await prepareDatabase(config, db, { seed: true });
} finally {
  await db.close();
}

afterAll(async () => {
  await withMigrationAccount(migrationBase, database, (sql) => sql(`DROP DATABASE IF EXISTS \`${database}\``));
});
