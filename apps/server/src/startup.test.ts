import { spawn } from "node:child_process";
import net from "node:net";
import path from "node:path";
import { describe, expect, it } from "vitest";
import { freePort } from "./test/free-port.ts";

/** Start the real server process with a given environment; collect what it prints and how it ends. */
function startServer(env: Record<string, string>, timeoutMs = 20_000): Promise<{ code: number | null; out: string; err: string }> {
  return new Promise((resolve) => {
    const dir = path.resolve(import.meta.dirname, "..");
    const child = spawn(path.join(dir, "node_modules/.bin/tsx"), ["src/server.ts"], {
      cwd: dir,
      env: { PATH: process.env.PATH ?? "", ...env },
    });
    let out = "";
    let err = "";
    child.stdout.on("data", (d) => (out += d));
    child.stderr.on("data", (d) => (err += d));
    const timer = setTimeout(() => child.kill("SIGKILL"), timeoutMs);
    child.on("exit", (code) => {
      clearTimeout(timer);
      resolve({ code, out, err });
    });
  });
}

/** The test database's two accounts, as npm test passes them (MIGRATION_DATABASE_URL only when set). */
const databaseEnv: Record<string, string> = {
  DATABASE_URL: process.env.DATABASE_URL!,
  ...(process.env.MIGRATION_DATABASE_URL ? { MIGRATION_DATABASE_URL: process.env.MIGRATION_DATABASE_URL } : {}),
};

function expectOneClearLine(result: { code: number | null; err: string }, pattern: RegExp) {
  expect(result.code).toBe(1);
  const lines = result.err.trim().split("\n");
  expect(lines).toHaveLength(1);
  expect(lines[0]).toMatch(pattern);
  expect(result.err).not.toMatch(/\bat .*\.ts:\d+/); // no stack trace
}

describe("start-up with a bad environment ends with one clear message", () => {
  it("an unparseable DATABASE_URL", async () => {
    const r = await startServer({ DATABASE_URL: "::not a url::" });
    expectOneClearLine(r, /^\[jogwright\] cannot start: bad environment: DATABASE_URL is not a valid URL/);
  });

  it("an unreachable database", async () => {
    // A port nothing listens on: bind one, note it, close it.
    const port = await freePort();
    const r = await startServer({ DATABASE_URL: `mariadb://u:p@127.0.0.1:${port}/nothing` });
    expectOneClearLine(r, /^\[jogwright\] cannot start: cannot reach the database at 127\.0\.0\.1:\d+\/nothing — /);
  });

  it.runIf(process.env.MIGRATION_DATABASE_URL && process.env.MIGRATION_DATABASE_URL !== process.env.DATABASE_URL)(
    "the runtime account without MIGRATION_DATABASE_URL: it may not migrate, and the message says which variable to set",
    async () => {
      const r = await startServer({ DATABASE_URL: process.env.DATABASE_URL!, PORT: "65000", SEED_DEMO: "0", SMTP_PORT: "0" });
      expectOneClearLine(r, /^\[jogwright\] cannot start: the database account cannot change the schema \(.*denied.*\); set MIGRATION_DATABASE_URL/);
    },
  );

  it("a port already in use", async () => {
    const blocker = net.createServer();
    const port = await new Promise<number>((resolve) => blocker.listen(0, "127.0.0.1", () => resolve((blocker.address() as net.AddressInfo).port)));
    try {
      // SMTP_PORT=0: the fake SMTP server takes any free port, so only the HTTP port is busy.
      const r = await startServer({ ...databaseEnv, PORT: String(port), SEED_DEMO: "0", SMTP_PORT: "0" });
      expectOneClearLine(r, new RegExp(`^\\[jogwright\\] cannot start: port ${port} on 127\\.0\\.0\\.1 is already in use; set PORT to a free port\\.$`));
    } finally {
      blocker.close();
    }
  });

  it("an SMTP port already in use for the fake mail server", async () => {
    const blocker = net.createServer();
    const port = await new Promise<number>((resolve) => blocker.listen(0, "127.0.0.1", () => resolve((blocker.address() as net.AddressInfo).port)));
    try {
      // The fake SMTP server starts before the HTTP listener, so PORT is never reached.
      const r = await startServer({ ...databaseEnv, PORT: "65000", SEED_DEMO: "0", SMTP_PORT: String(port) });
      expectOneClearLine(r, new RegExp(`^\\[jogwright\\] cannot start: SMTP port ${port} on 127\\.0\\.0\\.1 is already in use; set SMTP_PORT to a free port`));
    } finally {
      blocker.close();
    }
  });
});
