// `npm start`: everything needed to run Jogwright on a fresh Debian machine with Node.js 20 and root.
// pnpm, Debian packages, dependencies, a private MariaDB, the console build, then the server (which
// migrates as the migration account and seeds and runs as the runtime account). Ctrl-C stops the server and the database cleanly.
import { spawn } from "node:child_process";
import path from "node:path";
import { buildConsole, DATA_DIR, databaseEnv, log, portFromEnv, prepare, ROOT, SetupError } from "./lib/setup.mjs";

async function main() {
  const port = portFromEnv("PORT", 3000);
  const db = await prepare({ withChromium: true, dbName: "mariadb", defaultDbPort: 3407, database: "jogwright" });
  let shuttingDown = false;
  const shutdownDb = async () => {
    if (!db.owned) return;
    log("stopping the private MariaDB");
    await db.stop();
  };
  try {
    buildConsole();
  } catch (error) {
    await shutdownDb();
    throw error;
  }
  const serverDir = path.join(ROOT, "apps/server");
  // node itself (TypeScript through tsx's loader, no tsx CLI process between) in a session of its own
  // (detached: setsid), so the server's process leads its autogroup and may favour it while live sessions
  // run (apps/server/src/modules/jog/autogroup.ts). The terminal's Ctrl-C reaches this script, which passes
  // it on.
  const server = spawn(process.execPath, ["--import", "tsx", "src/server.ts"], {
    cwd: serverDir,
    detached: true,
    stdio: "inherit",
    env: { MAIL_DIR: path.join(DATA_DIR, "mail"), ...process.env, PORT: String(port), ...databaseEnv(db), NODE_ENV: process.env.NODE_ENV ?? "production" },
  });
  const stop = (signal) => {
    if (shuttingDown) return;
    shuttingDown = true;
    server.kill(signal);
  };
  process.on("SIGINT", () => stop("SIGINT"));
  process.on("SIGTERM", () => stop("SIGTERM"));
  // The terminal closed: the server, in its own session, would not hear of it.
  process.on("SIGHUP", () => stop("SIGTERM"));
  const code = await new Promise((resolve) => server.on("exit", (c) => resolve(c ?? 0)));
  await shutdownDb();
  process.exit(shuttingDown ? 0 : code);
}

main().catch((error) => {
  if (error instanceof SetupError) {
    console.error(`[jogwright] cannot start: ${error.message}`);
  } else {
    console.error("[jogwright] cannot start:", error);
  }
  process.exit(1);
});
