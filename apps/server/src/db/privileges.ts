import { QueryTypes, type Sequelize } from "sequelize";

/**
 * The two database accounts (issue 11, item 4). The migration account (MIGRATION_DATABASE_URL) owns the
 * schema: it runs the migrations, so it defines the triggers, which then run with its privileges
 * (MariaDB's default SQL SECURITY DEFINER). The runtime account (DATABASE_URL) runs the app with
 * SELECT, INSERT and UPDATE on its database and DELETE only on the tables below; no DDL, so no TRUNCATE
 * (which needs DROP and fires no trigger), DROP, ALTER or CREATE TRIGGER.
 *
 * Table privileges can be granted only once the tables exist, so they are granted here, after the
 * migrations, by the migration account (which needs GRANT OPTION on the database: `npm start` and
 * `npm test` give it that). A runtime account that already holds them (granted by a DBA) is left alone.
 *
 * Raw SQL, on purpose: the three queries here are about the accounts, not the app's data — who this
 * connection is (CURRENT_USER()), what it holds (information_schema's privilege views) and GRANT — and no
 * Sequelize model or queryInterface call can say any of them.
 */

/** Where the app deletes rows, and why. Every other table keeps its rows (several also refuse by trigger). */
export const RUNTIME_DELETE_TABLES = [
  "sessions", // sign-out, deactivation, expired sessions (lucia's adapter)
  "user_roles", // an admin's role change rewrites a user's roles
  "station_estop_latches", // a deliberate e-stop reset clears the station's latch
  "jog_recordings", // recording retention prunes the oldest unreferenced recordings (issue 11, item 8)
  "jog_recording_chunks", // … and their sample chunks
] as const;

/** Privileges of the runtime account on the whole database. */
export const RUNTIME_DATABASE_PRIVILEGES = ["SELECT", "INSERT", "UPDATE"] as const;

export class PrivilegeError extends Error {}

/** MariaDB's "access denied" errors: database, table, column, routine and "you need (at least one of) the X privilege". */
const ACCESS_DENIED = new Set([1044, 1142, 1143, 1227, 1370]);

/** The server's message when `error` (a Sequelize error, possibly wrapped by umzug) is an access denial, else null. */
export function accessDeniedMessage(error: unknown): string | null {
  for (let e = error as { errno?: number; sqlMessage?: string; parent?: unknown; cause?: unknown } | undefined, depth = 0; e && depth < 4; depth++) {
    if (typeof e.errno === "number" && ACCESS_DENIED.has(e.errno)) return (e.sqlMessage ?? "access denied").split("\n")[0]!;
    e = (e.parent ?? e.cause) as typeof e;
  }
  return null;
}

/** `user@host` as CURRENT_USER() names the account a connection authenticated as. */
async function currentAccount(db: Sequelize): Promise<{ account: string; database: string }> {
  const [row] = await db.query<{ account: string; database: string }>("SELECT CURRENT_USER() AS account, DATABASE() AS `database`", {
    type: QueryTypes.SELECT,
  });
  return row!;
}

/** The privileges the runtime connection itself holds, as `PRIVILEGE` (database-wide) or `PRIVILEGE table`. */
async function heldPrivileges(runtime: Sequelize, database: string): Promise<Set<string>> {
  // information_schema shows an account its own privileges at each level.
  const global = await runtime.query<{ p: string }>("SELECT PRIVILEGE_TYPE AS p FROM information_schema.USER_PRIVILEGES", { type: QueryTypes.SELECT });
  const schema = await runtime.query<{ p: string }>("SELECT PRIVILEGE_TYPE AS p FROM information_schema.SCHEMA_PRIVILEGES WHERE TABLE_SCHEMA = ?", {
    replacements: [database],
    type: QueryTypes.SELECT,
  });
  const table = await runtime.query<{ p: string; t: string }>(
    "SELECT PRIVILEGE_TYPE AS p, TABLE_NAME AS t FROM information_schema.TABLE_PRIVILEGES WHERE TABLE_SCHEMA = ?",
    { replacements: [database], type: QueryTypes.SELECT },
  );
  return new Set([...global.map((r) => r.p), ...schema.map((r) => r.p), ...table.map((r) => `${r.p} ${r.t}`)]);
}

const quoteName = (name: string) => `\`${name.replace(/`/g, "``")}\``;

/** Privileges a runtime account should not hold: DDL (TRUNCATE needs DROP), and DELETE or GRANT everywhere. */
const EXCESS = ["ALL PRIVILEGES", "DROP", "ALTER", "CREATE", "INDEX", "TRIGGER", "REFERENCES", "CREATE VIEW", "CREATE ROUTINE", "ALTER ROUTINE", "EVENT", "DELETE", "GRANT OPTION", "SUPER", "FILE", "PROCESS", "CREATE USER"];

/**
 * Give the runtime account (the `runtime` connection's) what it needs, through the migration account's
 * connection (`owner`); run after the migrations. With one account for both (an external deployment
 * with only DATABASE_URL) there is nothing to grant. Returns the statements it ran and the privileges
 * the runtime account holds beyond its needs (database-wide or global; for a warning).
 */
export async function grantRuntimePrivileges(owner: Sequelize, runtime: Sequelize): Promise<{ granted: string[]; excess: string[] }> {
  const [ownerAccount, runtimeAccount] = await Promise.all([currentAccount(owner), currentAccount(runtime)]);
  if (ownerAccount.database !== runtimeAccount.database) {
    throw new PrivilegeError(
      `DATABASE_URL names database "${runtimeAccount.database}" but MIGRATION_DATABASE_URL names "${ownerAccount.database}"; both must name the same database.`,
    );
  }
  if (ownerAccount.account === runtimeAccount.account) return { granted: [], excess: [] };
  const database = runtimeAccount.database;
  const held = await heldPrivileges(runtime, database);
  const at = runtimeAccount.account.lastIndexOf("@");
  const grantee = owner.escape(runtimeAccount.account.slice(0, at)) + "@" + owner.escape(runtimeAccount.account.slice(at + 1));
  const statements: string[] = [];
  const missing = RUNTIME_DATABASE_PRIVILEGES.filter((p) => !held.has(p));
  if (missing.length) statements.push(`GRANT ${missing.join(", ")} ON ${quoteName(database)}.* TO ${grantee}`);
  for (const table of RUNTIME_DELETE_TABLES) {
    if (!held.has("DELETE") && !held.has(`DELETE ${table}`)) statements.push(`GRANT DELETE ON ${quoteName(database)}.${quoteName(table)} TO ${grantee}`);
  }
  for (const sql of statements) {
    try {
      await owner.query(sql);
    } catch (error) {
      const reason = accessDeniedMessage(error) ?? String((error as Error).message).split("\n")[0];
      throw new PrivilegeError(
        `the migration account ${ownerAccount.account} cannot grant the runtime account ${runtimeAccount.account} its privileges (${reason}); give it GRANT OPTION on ${database}, or run as an administrator: ${statements.join("; ")}.`,
      );
    }
  }
  return { granted: statements, excess: EXCESS.filter((p) => held.has(p)) };
}
