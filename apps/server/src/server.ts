import http from "node:http";
import { ConfigError, loadConfig, type Config } from "./config.ts";
import { createApp } from "./app.ts";
import { createSequelize, describeConnectionError } from "./db/connection.ts";
import { migrate } from "./db/migrator.ts";
import { DEMO_ACCOUNTS, DEMO_PASSWORD, seedDemo } from "./db/seed.ts";

/** Start-up ends with one clear sentence on a bad environment, an unreachable database or a busy port. */
class StartupError extends Error {}

async function main(): Promise<void> {
  let config: Config;
  try {
    config = loadConfig();
  } catch (error) {
    if (error instanceof ConfigError) throw new StartupError(`bad environment: ${error.message}.`);
    throw error;
  }
  const db = createSequelize(config.databaseUrl);
  try {
    await db.authenticate();
  } catch (error) {
    throw new StartupError(describeConnectionError(config.databaseUrl, error));
  }
  const applied = await migrate(db);
  if (applied.length) console.log(`[jogwright] migrations applied: ${applied.join(", ")}`);
  if (config.seedDemo) await seedDemo(db);

  const { app } = createApp(config, db);
  const server = http.createServer(app);
  await new Promise<void>((resolve, reject) => {
    server.once("error", (error: NodeJS.ErrnoException) => {
      reject(
        error.code === "EADDRINUSE"
          ? new StartupError(`port ${config.port} on ${config.host} is already in use; set PORT to a free port.`)
          : error.code === "EACCES"
            ? new StartupError(`not allowed to listen on ${config.host}:${config.port}; pick a port above 1024.`)
            : error,
      );
    });
    server.listen(config.port, config.host, resolve);
  });

  const url = `http://${config.host}:${config.port}`;
  console.log(`\n  Jogwright is running at ${url}\n`);
  if (config.seedDemo) {
    console.log(`  Demo accounts (password for all: ${DEMO_PASSWORD}):`);
    for (const a of DEMO_ACCOUNTS) console.log(`    ${a.username.padEnd(8)} ${a.displayName.padEnd(14)} ${a.roles.join(", ")}`);
    console.log("");
  }
  console.log("  Simulation only: Jogwright never commands real hardware. Press Ctrl-C to stop.\n");

  let stopping = false;
  const stop = async (signal: string) => {
    if (stopping) return;
    stopping = true;
    console.log(`[jogwright] ${signal}: stopping the server`);
    server.closeAllConnections();
    await new Promise((r) => server.close(r));
    await db.close();
    process.exit(0);
  };
  process.on("SIGINT", () => void stop("SIGINT"));
  process.on("SIGTERM", () => void stop("SIGTERM"));
}

main().catch((error: unknown) => {
  if (error instanceof StartupError) {
    console.error(`[jogwright] cannot start: ${error.message}`);
  } else {
    console.error("[jogwright] cannot start: unexpected error", error);
  }
  process.exit(1);
});
