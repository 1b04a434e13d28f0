import type { Connection } from "mariadb";
import { loadConfig } from "../config.ts";
import { createSequelize } from "../db/connection.ts";
import { prepareDatabase } from "../db/prepare.ts";
import { grantRuntimePrivileges } from "../db/privileges.ts";
import { accountOf, scratchDatabase, withConnection, withMigrationAccount } from "./scratch-databases.ts";

/**
 * The API tests' databases, made fast (issue 9: `npm test` under 8 minutes). Once per `vitest run`
 * (global-setup.ts) one database, `<base>_template`, is created, migrated, granted and seeded exactly as
 * the server does on boot (prepareDatabase). Each test file's database (fresh-database.ts) is then a copy
 * of it made by the migration account: every table from its own SHOW CREATE TABLE (keys, foreign keys,
 * CHECKs, AUTO_INCREMENT), its rows, then its triggers (in their firing order, each with the sql_mode it
 * was created with), then the runtime account's grants as prepareDatabase gives them. A copy takes about a
 * second where migrating and seeding took about six (demo passwords are hashed with Argon2id, the demo's
 * evidence runs trials).
 */

const urlOn = (url: string, database: string) => {
  const u = new URL(url);
  u.pathname = `/${database}`;
  return u.toString();
};

const q = (name: string) => `\`${name.replace(/`/g, "``")}\``;

/** `<base>_template`, where base is DATABASE_URL's database. */
export function templateDatabase(baseUrl: string): string {
  return scratchDatabase(decodeURIComponent(new URL(baseUrl).pathname.slice(1)), "template");
}

/** Creates `database` afresh and gives the runtime account its database privileges on it. */
async function createEmpty(baseUrl: string, migrationBase: string, database: string): Promise<void> {
  const [runtime, owner] = await Promise.all([accountOf(baseUrl), accountOf(migrationBase)]);
  await withMigrationAccount(migrationBase, database, async (sql) => {
    await sql(`DROP DATABASE IF EXISTS ${q(database)}`);
    await sql(`CREATE DATABASE ${q(database)} CHARACTER SET utf8mb4 COLLATE utf8mb4_unicode_ci`);
    if (runtime !== owner) await sql(`GRANT SELECT, INSERT, UPDATE ON ${q(database)}.* TO ${runtime}`);
  });
}

/** Migrates, grants and seeds the template, as the server does on boot. */
export async function prepareTemplate(baseUrl: string, migrationBase: string): Promise<void> {
  const template = templateDatabase(baseUrl);
  await createEmpty(baseUrl, migrationBase, template);
  const config = loadConfig({ ...process.env, DATABASE_URL: urlOn(baseUrl, template), MIGRATION_DATABASE_URL: urlOn(migrationBase, template) });
  const db = createSequelize(config.databaseUrl);
  try {
    await prepareDatabase(config, db, { seed: true });
  } finally {
    await db.close();
  }
}

function asMigrationAccount<T>(migrationBase: string, work: (c: Connection) => Promise<T>): Promise<T> {
  return withConnection(migrationBase, false, work);
}

/** The template's tables or triggers that `namesSql` lists (by `name`, in its order), each with its SHOW CREATE row. */
async function showCreateEach(c: Connection, template: string, kind: "TABLE" | "TRIGGER", namesSql: string): Promise<{ name: string; row: Record<string, string> }[]> {
  const names = (await c.query(namesSql, [template])) as { name: string }[];
  const described = [];
  for (const { name } of names) {
    const [row] = (await c.query(`SHOW CREATE ${kind} ${q(template)}.${q(name)}`)) as Record<string, string>[];
    described.push({ name, row: row! });
  }
  return described;
}

/** Makes `target` a copy of the template: tables, rows, triggers, then the runtime account's grants. */
export async function cloneTemplate(baseUrl: string, migrationBase: string, target: string): Promise<void> {
  const template = templateDatabase(baseUrl);
  await createEmpty(baseUrl, migrationBase, target);
  await asMigrationAccount(migrationBase, async (c) => {
    await c.query(`USE ${q(target)}`);
    await c.query("SET SESSION foreign_key_checks = 0");
    const tables = await showCreateEach(
      c,
      template,
      "TABLE",
      "SELECT table_name AS name FROM information_schema.tables WHERE table_schema = ? AND table_type = 'BASE TABLE' ORDER BY table_name",
    );
    for (const { name, row } of tables) {
      await c.query(row["Create Table"]!);
      await c.query(`INSERT INTO ${q(name)} SELECT * FROM ${q(template)}.${q(name)}`);
    }
    // Triggers last (the rows above must not fire them), in their firing order per table, timing and event,
    // so that created one after another they keep it without their PRECEDES/FOLLOWS clauses.
    const triggers = await showCreateEach(
      c,
      template,
      "TRIGGER",
      "SELECT trigger_name AS name FROM information_schema.triggers WHERE trigger_schema = ? ORDER BY event_object_table, action_timing, event_manipulation, action_order",
    );
    for (const { row } of triggers) {
      await c.query("SET SESSION sql_mode = ?", [row["sql_mode"] ?? ""]);
      const statement = row["SQL Original Statement"]!.replace(/\s(PRECEDES|FOLLOWS)\s+`?\w+`?/i, "");
      await c.query(statement);
    }
    await c.query("SET SESSION foreign_key_checks = 1");
  });
  // The runtime account's table privileges, exactly as prepareDatabase grants them after migrating.
  const owner = createSequelize(urlOn(migrationBase, target), { isSchemaOwner: true });
  const runtime = createSequelize(urlOn(baseUrl, target));
  try {
    await grantRuntimePrivileges(owner, runtime);
  } finally {
    await Promise.all([owner.close(), runtime.close()]);
  }
}
