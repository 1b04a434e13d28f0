import { loadConfig } from "../config.ts";
import { createSequelize } from "../db/connection.ts";
import { prepareDatabase } from "../db/prepare.ts";

/**
 * Migrate the test database once before the API tests as the migration account (MIGRATION_DATABASE_URL,
 * else DATABASE_URL's), grant the runtime account (DATABASE_URL) its privileges and seed as it: the tests
 * then run as the runtime account, as the server does.
 */
export default async function setup(): Promise<void> {
  if (!process.env.DATABASE_URL) {
    throw new Error("DATABASE_URL is not set: run the API tests through `npm test`, which starts the test MariaDB.");
  }
  const config = loadConfig(process.env);
  const db = createSequelize(config.databaseUrl);
  try {
    await prepareDatabase(config, db, { seed: true });
  } finally {
    await db.close();
  }
}
