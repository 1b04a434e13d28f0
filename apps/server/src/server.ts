import http from "node:http";
import { ConfigError, loadConfig, type Config } from "./config.ts";
import { createApp } from "./app.ts";
import { attachJogSockets } from "./modules/jog/socket.ts";
import { createSequelize, describeConnectionError } from "./db/connection.ts";
import { prepareDatabase } from "./db/prepare.ts";
import { PrivilegeError } from "./db/privileges.ts";
import { DEMO_ACCOUNTS, DEMO_PASSWORD } from "./db/seed.ts";
import { SmtpPortInUseError, startFakeSmtp, type FakeSmtp } from "./mail/fake-smtp.ts";
import { closeTrialPool } from "./modules/trials/trial-pool.ts";

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
  // Migrate as the migration account, grant the runtime account its privileges, seed as the runtime one.
  let prepared: Awaited<ReturnType<typeof prepareDatabase>>;
  try {
    prepared = await prepareDatabase(config, db, { seed: config.seedDemo });
  } catch (error) {
    if (error instanceof PrivilegeError) throw new StartupError(error.message);
    if (String((error as { name?: string }).name).startsWith("SequelizeConnection")) {
      throw new StartupError(`migration account (MIGRATION_DATABASE_URL): ${describeConnectionError(config.migrationDatabaseUrl, error)}`);
    }
    throw error;
  }
  if (prepared.applied.length) console.log(`[jogwright] migrations applied: ${prepared.applied.join(", ")}`);
  if (prepared.granted.length) console.log(`[jogwright] granted the runtime account: ${prepared.granted.join("; ")}`);
  if (prepared.excess.length) {
    console.warn(`[jogwright] warning: the runtime account (DATABASE_URL) holds ${prepared.excess.join(", ")}; it needs only SELECT, INSERT, UPDATE and DELETE on a few tables (see README).`);
  }

  const { app, ctx } = createApp(config, db);
  let fakeSmtp: FakeSmtp | null = null;
  if (config.mail.fakeSmtp) {
    try {
      fakeSmtp = await startFakeSmtp({ host: config.mail.smtpHost, port: config.mail.smtpPort, dir: config.mail.dir });
    } catch (error) {
      if (error instanceof SmtpPortInUseError) {
        throw new StartupError(
          `SMTP port ${config.mail.smtpPort} on ${config.mail.smtpHost} is already in use; set SMTP_PORT to a free port (or FAKE_SMTP=0 to use that server).`,
        );
      }
      throw error;
    }
    ctx.mailer.setPort(fakeSmtp.port);
  }
  ctx.mailer.start();
  const server = http.createServer(app);
  const jogSockets = attachJogSockets(server, ctx);
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
  if (ctx.scale) {
    const takes = config.redis!.trialQueueConcurrency;
    console.log(`  Scaled out through Redis as instance ${ctx.scale.instanceId}; bench runs: ${takes === 0 ? "takes none (submits only)" : `takes up to ${takes ?? "one per pool thread"} at once`}.`);
  }
  console.log(`  Scheduling: ${jogSockets.hub.autogroup.describe()}.`);
  if (fakeSmtp) console.log(`  Mail is caught by the local fake SMTP server on port ${fakeSmtp.port} (files in ${config.mail.dir}).`);
  console.log("  Simulation only: Jogwright never commands real hardware. Press Ctrl-C to stop.\n");

  let stopping = false;
  const stop = async (signal: string) => {
    if (stopping) return;
    stopping = true;
    console.log(`[jogwright] ${signal}: stopping the server`);
    await jogSockets.close(); // ends live sessions, flushes their recordings
    server.closeAllConnections();
    await new Promise((r) => server.close(r));
    await ctx.mailer.stop();
    await closeTrialPool(); // offline runs under way are dropped (their requests are gone)
    await ctx.scale?.close();
    await fakeSmtp?.close();
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
