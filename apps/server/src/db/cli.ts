/**
 * `pnpm --filter @jogwright/server migrate` / `seed`: run the migrations, or the migrations and the demo
 * seed, with the same configuration the server reads: migrations as MIGRATION_DATABASE_URL's account
 * (else DATABASE_URL's), which then grants the runtime account (DATABASE_URL) its privileges; the seed as
 * the runtime account. `npm start` and `npm test` do both themselves; this is for a database you point at
 * by hand.
 */
import { ConfigError, loadConfig } from "../config.ts";
import { createSequelize, describeConnectionError } from "./connection.ts";
import { prepareDatabase } from "./prepare.ts";

const COMMANDS = ["migrate", "seed"] as const;

async function main(): Promise<number> {
  const command = process.argv[2];
  if (!COMMANDS.includes(command as (typeof COMMANDS)[number])) {
    console.error(`usage: tsx src/db/cli.ts ${COMMANDS.join("|")}`);
    return 2;
  }
  let config;
  try {
    config = loadConfig();
  } catch (error) {
    if (error instanceof ConfigError) {
      console.error(error.message);
      return 2;
    }
    throw error;
  }
  const db = createSequelize(config.databaseUrl);
  try {
    const { applied, granted, excess } = await prepareDatabase(config, db, { seed: command === "seed" });
    console.log(applied.length ? `applied migrations: ${applied.join(", ")}` : "the schema is up to date");
    if (granted.length) console.log(`granted the runtime account: ${granted.join("; ")}`);
    if (excess.length) console.warn(`warning: the runtime account (DATABASE_URL) holds ${excess.join(", ")}; it needs only SELECT, INSERT, UPDATE and DELETE on a few tables`);
    if (command === "seed") console.log("demo data seeded");
    return 0;
  } catch (error) {
    const name = (error as { name?: string }).name ?? "";
    // A connection failure gets the one-line description the server prints; anything else its message.
    console.error(name.startsWith("SequelizeConnection") ? describeConnectionError(config.databaseUrl, error) : String((error as Error).message ?? error));
    return 1;
  } finally {
    await db.close();
  }
}

process.exitCode = await main();
