import { spawn, type ChildProcess } from "node:child_process";
import net from "node:net";
import type { AddressInfo } from "node:net";
import path from "node:path";
import { fileURLToPath } from "node:url";
import { keepScreenshot, signIn } from "../support/browser.ts";
import { expect, Setup, test, uniqueTag } from "../support/fixtures.ts";

// Issue 11, "Fault tests in CI": the server restarts while the drive page drives. This test starts a server
// of its own (same database and built console as the suite's server, its own port), so restarting it
// disturbs no other test. The page must say why the session stopped, reconnect with growing waits while
// the server is away, and be ready to drive again when it is back — never show motion without frames.

const serverDir = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "../../apps/server");

async function freePort(): Promise<number> {
  const server = net.createServer();
  await new Promise<void>((resolve) => server.listen(0, "127.0.0.1", resolve));
  const { port } = server.address() as AddressInfo;
  await new Promise((r) => server.close(r));
  return port;
}

async function startServer(port: number): Promise<ChildProcess> {
  if (!process.env.DATABASE_URL) throw new Error("DATABASE_URL is not set: `npm test` passes the test database to the browser tests.");
  const child = spawn(path.join(serverDir, "node_modules/.bin/tsx"), ["src/server.ts"], {
    cwd: serverDir,
    env: { ...process.env, NODE_ENV: "test", PORT: String(port), SMTP_PORT: "0", FAKE_SMTP: "1", SEED_DEMO: "0" },
    stdio: ["ignore", "ignore", "pipe"],
  });
  const deadline = Date.now() + 60_000;
  for (;;) {
    if (child.exitCode !== null) throw new Error(`the test's server exited with ${child.exitCode}`);
    try {
      if ((await fetch(`http://127.0.0.1:${port}/api/health`)).ok) return child;
    } catch {
      // not listening yet
    }
    if (Date.now() > deadline) throw new Error("the test's server did not answer within 60 s");
    await new Promise((r) => setTimeout(r, 200));
  }
}

async function stopServer(child: ChildProcess | null): Promise<void> {
  if (!child || child.exitCode !== null) return;
  const exited = new Promise((r) => child.once("exit", r));
  child.kill("SIGTERM");
  await exited;
}

let server: ChildProcess | null = null;
test.afterEach(async () => {
  await stopServer(server);
  server = null;
});

test("a server restart mid-drive: the page says why the session stopped, reconnects with backoff, and can drive again", async ({ page }, testInfo) => {
  test.setTimeout(180_000);
  const port = await freePort();
  const url = `http://127.0.0.1:${port}`;
  server = await startServer(port);
  const setup = new Setup(url);
  const engineer = await setup.person(["engineer"]);
  const operator = await setup.person(["operator"]);
  const arm = await setup.arm(6);
  const profile = await setup.profile({ name: `E2E restart ${uniqueTag()}`, operator, arm, engineer, params: { ...setup.defaults(arm), watchdogMs: 1500 }, note: "draft" });

  await signIn(page, url, engineer.username, "/drive", engineer.password);
  const profileSelect = page.getByLabel("Profile", { exact: true });
  await profileSelect.selectOption((await profileSelect.locator("option", { hasText: profile.name }).first().getAttribute("value"))!);
  const connection = page.getByTestId("connection-state");
  await expect(connection).toHaveAttribute("data-connection", "open");
  await page.getByRole("button", { name: /Start driving/ }).click();
  await expect(page.getByTestId("session-info")).toBeVisible();
  await expect(page.getByTestId("tcp-x")).toHaveText(/^\s*-?\d/);

  // The server goes down: it ends the session (server-shutdown, recording saved), then closes the socket.
  await stopServer(server);
  server = null;
  await expect(page.getByTestId("session-ended")).toHaveAttribute("data-reason", "server-shutdown");
  await expect(page.getByTestId("session-ended")).toContainText(/server is shutting down/i);
  await expect(connection).toHaveAttribute("data-connection", "reconnecting");
  // Backoff: 0.5, 1, 2, 4 s …; the attempt count climbs while nobody answers.
  await expect(connection).toContainText(/attempt [3-9]/, { timeout: 20_000 });
  await expect(page.getByTestId("motion-state")).not.toContainText(/moving/i);
  await keepScreenshot(page, testInfo, "server-restart-away", "away");

  // Back on the same address: the page reconnects by itself and can start again; the reason stays on screen.
  server = await startServer(port);
  await expect(connection).toHaveAttribute("data-connection", "open", { timeout: 30_000 });
  await expect(page.getByTestId("session-ended")).toHaveAttribute("data-reason", "server-shutdown");
  await page.getByRole("button", { name: /Start driving/ }).click();
  await expect(page.getByTestId("session-info")).toBeVisible();
  await keepScreenshot(page, testInfo, "server-restart-back", "back");
});
