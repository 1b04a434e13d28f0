import { scratchDatabase, withMigrationAccount } from "./scratch-databases.ts";
import { prepareTemplate } from "./template-database.ts";

/**
 * Once before the API tests: check that the migration account (MIGRATION_DATABASE_URL, else
 * DATABASE_URL's) may create and drop the first test database, so a missing grant is one clear sentence
 * instead of a failure in every file; then migrate and seed the template every file's database is copied
 * from (template-database.ts). Each Vitest project runs it (vitest.config.ts): the template is made once
 * per `vitest run` (the projects' set-ups share this process). `npm test` runs the "faults" project in a
 * `vitest run` of its own beside the checks, then the other projects in a second one, with
 * JOGWRIGHT_TEST_TEMPLATE=ready when the first made the template (same code, same `npm test`): that run
 * copies the template as it is.
 */
const state = globalThis as { jogwrightTemplate?: Promise<void> };

export default async function setup(): Promise<void> {
  const base = process.env.DATABASE_URL;
  if (!base) {
    throw new Error("DATABASE_URL is not set: run the API tests through `npm test`, which starts the test MariaDB.");
  }
  const first = scratchDatabase(decodeURIComponent(new URL(base).pathname.slice(1)), "1");
  await withMigrationAccount(process.env.MIGRATION_DATABASE_URL || base, first, async (sql) => {
    await sql(`CREATE DATABASE IF NOT EXISTS \`${first}\``);
    await sql(`DROP DATABASE IF EXISTS \`${first}\``);
  });
  if (process.env.JOGWRIGHT_TEST_TEMPLATE === "ready") return;
  state.jogwrightTemplate ??= prepareTemplate(base, process.env.MIGRATION_DATABASE_URL || base);
  await state.jogwrightTemplate;
}
