import type { Sequelize } from "sequelize";
import type { Config } from "../config.ts";
import { createSequelize } from "./connection.ts";
import { migrate } from "./migrator.ts";
import { accessDeniedMessage, grantRuntimePrivileges, PrivilegeError } from "./privileges.ts";
import { seedDemo } from "./seed.ts";

/**
 * Everything before the app runs on a database, in one place for server.ts, the CLI, the test set-up and
 * the benchmark: migrate with the migration account (MIGRATION_DATABASE_URL, which owns the schema and
 * defines the triggers), grant the runtime account its privileges (db/privileges.ts), then seed the demo
 * data, when asked, as the runtime account like any other data. `db` is the runtime connection.
 */
export async function prepareDatabase(
  config: Pick<Config, "databaseUrl" | "migrationDatabaseUrl">,
  db: Sequelize,
  options: { seed: boolean },
): Promise<{ applied: string[]; granted: string[]; excess: string[] }> {
  // Its own connection even when both URLs name one account: the runtime pool's short query timeout
  // (connection.ts) is not for DDL, which may run silent for long.
  const owner = createSequelize(config.migrationDatabaseUrl, { isSchemaOwner: true });
  try {
    let applied: string[];
    try {
      applied = await migrate(owner);
    } catch (error) {
      const denied = accessDeniedMessage(error);
      if (!denied) throw error;
      throw new PrivilegeError(
        `the database account cannot change the schema (${denied}); set MIGRATION_DATABASE_URL to the account that owns it (DATABASE_URL is the runtime account the app runs as).`,
      );
    }
    const { granted, excess } = await grantRuntimePrivileges(owner, db);
    if (options.seed) await seedDemo(db);
    return { applied, granted, excess };
  } finally {
    await owner.close();
  }
}
