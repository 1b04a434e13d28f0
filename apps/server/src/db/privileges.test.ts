import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { QueryTypes, type Sequelize } from "sequelize";
import { call, createHarness, DEMO_BY_ROLE, signIn, type Harness } from "../test/harness.ts";
import { createOwnerDb } from "../test/owner-db.ts";
import { grantRuntimePrivileges, RUNTIME_DELETE_TABLES } from "./privileges.ts";

/**
 * Two database accounts (issue 11, item 4): the app runs as a runtime account that cannot change the
 * schema or empty a table, so `TRUNCATE audit_log` (which fires no trigger) is refused; the migration
 * account owns the schema and defines the triggers. `npm test` creates both (scripts/lib/setup.mjs) and
 * runs these tests as the runtime account (DATABASE_URL), migrating as the other (MIGRATION_DATABASE_URL).
 */
let h: Harness;
let owner: Sequelize;
const accounts = { runtime: "", owner: "" };
/** The runtime account's own privileges: global, on its database, and per table (`PRIVILEGE table`). */
const held = { global: [] as string[], database: [] as string[], table: [] as string[] };

const account = async (db: Sequelize) =>
  (await db.query<{ a: string }>("SELECT CURRENT_USER() AS a", { type: QueryTypes.SELECT }))[0]!.a;

beforeAll(async () => {
  h = createHarness();
  owner = createOwnerDb();
  accounts.runtime = await account(h.db);
  accounts.owner = await account(owner);
  const rows = async (sql: string) => h.db.query<{ p: string; t?: string }>(sql, { type: QueryTypes.SELECT });
  held.global = (await rows("SELECT PRIVILEGE_TYPE AS p FROM information_schema.USER_PRIVILEGES")).map((r) => r.p);
  held.database = (await rows("SELECT PRIVILEGE_TYPE AS p FROM information_schema.SCHEMA_PRIVILEGES WHERE TABLE_SCHEMA = DATABASE()")).map((r) => r.p);
  held.table = (await rows("SELECT PRIVILEGE_TYPE AS p, TABLE_NAME AS t FROM information_schema.TABLE_PRIVILEGES WHERE TABLE_SCHEMA = DATABASE()")).map(
    (r) => `${r.p} ${r.t}`,
  );
});
afterAll(async () => {
  await owner?.close();
  await h?.close();
});

/** Before any statement that would destroy data if it were allowed: stop unless the app's account is the restricted one. */
function requireRestrictedRuntimeAccount() {
  expect(accounts.runtime, "the tests must run as a runtime account other than the migration account (npm test sets both)").not.toBe(accounts.owner);
  expect(held.global).toEqual(["USAGE"]);
  expect(held.database).not.toContain("DROP");
}

describe("the database accounts", () => {
  it("the app runs as a runtime account other than the migration account, with only SELECT, INSERT and UPDATE on its database and DELETE on the tables that need it", () => {
    expect(accounts.runtime).not.toBe(accounts.owner);
    expect(held.global).toEqual(["USAGE"]);
    expect([...held.database].sort()).toEqual(["INSERT", "SELECT", "UPDATE"]);
    expect([...held.table].sort()).toEqual(RUNTIME_DELETE_TABLES.map((t) => `DELETE ${t}`).sort());
  });

  it("as the runtime account, TRUNCATE audit_log, DROP TABLE, ALTER TABLE, CREATE TABLE and CREATE TRIGGER are refused, and the audit trail keeps every row", async () => {
    requireRestrictedRuntimeAccount();
    const count = async () => (await h.db.query<{ n: number }>("SELECT COUNT(*) AS n FROM audit_log", { type: QueryTypes.SELECT }))[0]!.n;
    const before = await count();
    expect(Number(before)).toBeGreaterThan(0); // the seed audits what it creates
    const denied = /command denied/;
    await expect(h.db.query("TRUNCATE TABLE audit_log")).rejects.toThrow(denied);
    await expect(h.db.query("DROP TABLE audit_log")).rejects.toThrow(denied);
    await expect(h.db.query("ALTER TABLE audit_log ADD COLUMN forged INT NULL")).rejects.toThrow(denied);
    await expect(h.db.query("CREATE TABLE audit_log_copy (id INT)")).rejects.toThrow(denied);
    await expect(
      h.db.query("CREATE TRIGGER audit_log_forge BEFORE INSERT ON audit_log FOR EACH ROW SET NEW.summary = 'forged'"),
    ).rejects.toThrow(denied);
    await expect(h.db.query("DROP TRIGGER audit_log_before_delete")).rejects.toThrow(/denied/);
    await expect(h.db.query("DELETE FROM audit_log ORDER BY id DESC LIMIT 1")).rejects.toThrow(denied);
    expect(await count()).toBe(before);
  });

  it("the runtime account may delete rows only in the tables whose design needs it", async () => {
    requireRestrictedRuntimeAccount();
    const tables = (
      await h.db.query<{ t: string }>("SELECT TABLE_NAME AS t FROM information_schema.TABLES WHERE TABLE_SCHEMA = DATABASE()", { type: QueryTypes.SELECT })
    ).map((r) => r.t);
    for (const table of RUNTIME_DELETE_TABLES) expect(tables).toContain(table);
    for (const table of tables) {
      // WHERE 1 = 0 deletes nothing: only the privilege check is exercised.
      const attempt = h.db.query(`DELETE FROM \`${table}\` WHERE 1 = 0`);
      if ((RUNTIME_DELETE_TABLES as readonly string[]).includes(table)) await expect(attempt, table).resolves.toBeDefined();
      else await expect(attempt, table).rejects.toThrow(/DELETE command denied/);
    }
  });

  it("every trigger is defined by the migration account, so it runs with the owner's privileges whoever fires it", async () => {
    const definers = await owner.query<{ definer: string }>(
      "SELECT DISTINCT DEFINER AS definer FROM information_schema.TRIGGERS WHERE TRIGGER_SCHEMA = DATABASE()",
      { type: QueryTypes.SELECT },
    );
    expect(definers.map((d) => d.definer)).toEqual([accounts.owner]);
  });

  it("granting again changes nothing, and with one account for both there is nothing to grant", async () => {
    expect(await grantRuntimePrivileges(owner, h.db)).toEqual({ granted: [], excess: [] });
    expect(await grantRuntimePrivileges(owner, owner)).toEqual({ granted: [], excess: [] });
  });

  it("the app works as the runtime account: signing in writes a session, signing out deletes it", async () => {
    const cookie = await signIn(h, DEMO_BY_ROLE.engineer);
    expect((await call(h, "get", "/api/auth/me", cookie)).status).toBe(200);
    expect((await call(h, "post", "/api/auth/sign-out", cookie)).status).toBeLessThan(300);
    expect((await call(h, "get", "/api/auth/me", cookie)).status).toBe(401);
  });
});
