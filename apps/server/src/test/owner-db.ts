import type { Sequelize } from "sequelize";
import { loadConfig } from "../config.ts";
import { createSequelize } from "../db/connection.ts";

/**
 * A connection as the migration account (MIGRATION_DATABASE_URL, else DATABASE_URL's), which owns the
 * schema: for tests that prove a trigger holds even for the account that could otherwise delete, and
 * that compare it with the runtime account the app (and the harness) runs as. Close it when done.
 */
export function createOwnerDb(): Sequelize {
  return createSequelize(loadConfig(process.env).migrationDatabaseUrl, { isSchemaOwner: true });
}
