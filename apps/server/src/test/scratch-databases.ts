import mariadb, { type Connection } from "mariadb";
import { accessDeniedMessage } from "../db/privileges.ts";

/**
 * The API tests' own databases: each test file runs on `<base>_<slot>` (fresh-database.ts), where the
 * base is DATABASE_URL's database and the slot one of 1 … TEST_DATABASE_SLOTS claimed with a MariaDB named
 * lock for the file's lifetime (claimSlot). The
 * migration account creates, grants and drops them, so it needs every privilege WITH GRANT OPTION on each
 * of them by name; `npm test` gives it `<base>_1` … `<base>_4` on its private MariaDB
 * (TEST_DATABASE_SLOTS in scripts/lib/setup.mjs). A wildcard grant would not do: MariaDB lets the holder
 * of `<base>\_%` create the databases but not grant database privileges on one of them.
 */
export function scratchDatabase(base: string, slot: string): string {
  const name = `${base}_${slot}`;
  if (!/^[\w$]{1,64}$/.test(name)) throw new Error(`"${name}" cannot name a test database (letters, digits, _ and $, at most 64 characters).`);
  return name;
}

/** How many `<base>_<slot>` databases the migration account may use (TEST_DATABASE_SLOTS in scripts/lib/setup.mjs). */
export const TEST_DATABASE_SLOTS = 4;

/**
 * Claims a free slot for this test file: the first of 1 … TEST_DATABASE_SLOTS whose named lock
 * (`<base>_slot_<n>`, GET_LOCK) this connection obtains; the lock lasts until `release` (or until the
 * process ends and its connection with it). Not VITEST_POOL_ID: with more than one Vitest project, Vitest 4
 * gave two files running at the same time the same pool id (tried), and so the same database.
 */
export async function claimSlot(migrationUrl: string, base: string, waitMs = 120_000): Promise<{ slot: string; release: () => Promise<void> }> {
  const connection = await connect(migrationUrl, false);
  // A connection lost later (a test that stops a server) must not throw from an unhandled 'error' event.
  connection.on("error", () => {});
  const deadline = Date.now() + waitMs;
  for (;;) {
    for (let n = 1; n <= TEST_DATABASE_SLOTS; n++) {
      // Raw SQL: a named lock is a server function no model can say (and this runs before any model exists).
      const [row] = (await connection.query("SELECT GET_LOCK(?, 0) AS got", [`${base}_slot_${n}`])) as { got: number | bigint | null }[];
      if (Number(row?.got) === 1) return { slot: String(n), release: () => connection.end() };
    }
    if (Date.now() > deadline) {
      await connection.end();
      throw new Error(`no free test database slot of ${TEST_DATABASE_SLOTS} within ${waitMs / 1000} s: more test files run at once than there are slots.`);
    }
    await new Promise((r) => setTimeout(r, 100));
  }
}

/** A connection as `url`'s account, on its database only with `withDatabase`. */
function connect(url: string, withDatabase: boolean): Promise<Connection> {
  const u = new URL(url);
  return mariadb.createConnection({
    host: u.hostname,
    port: Number(u.port || 3306),
    user: decodeURIComponent(u.username),
    password: decodeURIComponent(u.password),
    ...(withDatabase ? { database: decodeURIComponent(u.pathname.slice(1)) } : {}),
    connectTimeout: 5000,
  });
}

/** A connection as `url`'s account (no default database unless `withDatabase`), closed after `work`. */
export async function withConnection<T>(url: string, withDatabase: boolean, work: (c: Connection) => Promise<T>): Promise<T> {
  const connection = await connect(url, withDatabase);
  try {
    return await work(connection);
  } finally {
    await connection.end();
  }
}

/** `'user'@'host'` as the server names `url`'s account (CURRENT_USER()). */
export function accountOf(url: string): Promise<string> {
  return withConnection(url, true, async (c) => {
    const [row] = (await c.query("SELECT CURRENT_USER() AS a")) as { a: string }[];
    const at = row!.a.lastIndexOf("@");
    const quote = (s: string) => `'${s.replace(/'/g, "''")}'`;
    return `${quote(row!.a.slice(0, at))}@${quote(row!.a.slice(at + 1))}`;
  });
}

/**
 * Runs `work` as the migration account (MIGRATION_DATABASE_URL's, without a default database) and turns
 * an access denial into one sentence naming the grant that is missing.
 */
export async function withMigrationAccount(migrationUrl: string, database: string, work: (sql: (statement: string) => Promise<unknown>) => Promise<unknown>): Promise<void> {
  try {
    await withConnection(migrationUrl, false, (c) => work((statement) => c.query(statement)));
  } catch (error) {
    const denied = accessDeniedMessage(error);
    if (!denied) throw error;
    const account = decodeURIComponent(new URL(migrationUrl).username);
    throw new Error(
      `the migration account ${account} cannot create, grant or drop ${database}, the database of one API test file (${denied}). As an administrator: GRANT ALL PRIVILEGES ON \`${database}\`.* TO '${account}'@'<its host>' WITH GRANT OPTION — npm test grants <base>_1 … <base>_4 on its private MariaDB, one per test file running at once.`,
    );
  }
}
