import { afterAll } from "vitest";
import { claimSlot, scratchDatabase, withMigrationAccount } from "./scratch-databases.ts";
import { cloneTemplate } from "./template-database.ts";

/**
 * Vitest `setupFiles` entry: runs in each test file's process before the file is imported. The file gets
 * a database of its own, `<base>_<slot>` (scratch-databases.ts: a slot no file running at the same time
 * holds, claimed with a named lock): a fresh copy of the template that global-setup.ts migrated, granted and seeded with
 * prepareDatabase exactly as the server does on boot (template-database.ts). DATABASE_URL and
 * MIGRATION_DATABASE_URL then name it, so every harness, owner connection and child server of the file
 * uses it; it is dropped after the file. No test sees what another file did.
 */
// The URLs as `npm test` gave them (kept in case files ever share a worker's environment: each file
// points them at its own copy below).
const original = ((globalThis as { jogwrightDatabaseUrls?: { base?: string; migration?: string } }).jogwrightDatabaseUrls ??= {
  base: process.env.DATABASE_URL,
  migration: process.env.MIGRATION_DATABASE_URL,
});
const base = original.base;
if (!base) throw new Error("DATABASE_URL is not set: run the API tests through `npm test`, which starts the test MariaDB.");
const migrationBase = original.migration || base;
const baseName = decodeURIComponent(new URL(base).pathname.slice(1));
const claimed = await claimSlot(migrationBase, baseName);
const database = scratchDatabase(baseName, claimed.slot);

const onDatabase = (url: string) => {
  const u = new URL(url);
  u.pathname = `/${database}`;
  return u.toString();
};

// A copy of the template global-setup.ts migrated and seeded (template-database.ts): the same tables,
// triggers, rows and grants as migrating and seeding here, in a sixth of the time.
await cloneTemplate(base, migrationBase, database);
process.env.DATABASE_URL = onDatabase(base);
if (original.migration) process.env.MIGRATION_DATABASE_URL = onDatabase(original.migration);

afterAll(async () => {
  try {
    await withMigrationAccount(migrationBase, database, (sql) => sql(`DROP DATABASE IF EXISTS \`${database}\``));
  } finally {
    await claimed.release();
  }
});
