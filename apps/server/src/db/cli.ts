/**
 * `pnpm --filter @jogwright/server migrate` / `seed`: run the migrations, or the migrations and the demo
 * seed, against DATABASE_URL (the same configuration the server reads). `npm start` and `npm test` do both
 * themselves; this is for a database you point at by hand.
 */
import { ConfigError, loadConfig } from "../config.ts";
import { createSequelize, describeConnectionError } from "./connection.ts";
import { migrate } from "./migrator.ts";
import { seedDemo } from "./seed.ts";

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
    const applied = await migrate(db);
    console.log(applied.length ? `applied migrations: ${applied.join(", ")}` : "the schema is up to date");
    if (command === "seed") {
      await seedDemo(db);
      console.log("demo data seeded");
    }
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
