import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Browser, BrowserContext, Page } from "playwright-core";
import { baseUrl, DEMO_PASSWORD, fillSignInForm, launchBrowser, saveScreenshot } from "../support/browser.ts";

// The console foundation in a real browser against the real server: sign-in, the role-dependent
// navigation, the cautions banner, creating a user as admin, sign-out and a wrong password.

// Menu order follows NAV_ITEMS in apps/console/src/app/navigation.ts.
const OPERATOR_NAV = ["Overview", "Drive", "Recordings", "Arms", "Profiles"];
const ENGINEER_NAV = ["Overview", "Drive", "Live", "Recordings", "Arms", "Profiles", "Ceilings"];
const DEMO_ACCOUNTS: { username: string; nav: string[] }[] = [
  { username: "olena", nav: OPERATOR_NAV },
  { username: "tomas", nav: OPERATOR_NAV },
  { username: "emeka", nav: ENGINEER_NAV },
  { username: "sigrid", nav: ["Overview", "Live", "Recordings", "Arms", "Profiles", "Reviews", "Ceilings", "Audit"] },
  { username: "adele", nav: ["Overview", "Arms", "Audit", "Users", "Outbox"] },
];
const TIMEOUT_MS = 15_000;

let browser: Browser;
let url: string;

beforeAll(async () => {
  url = baseUrl();
  browser = await launchBrowser();
}, 30_000);

afterAll(async () => {
  await browser?.close();
});

async function newPage(): Promise<{ context: BrowserContext; page: Page }> {
  const context = await browser.newContext({ viewport: { width: 1280, height: 860 } });
  context.setDefaultTimeout(TIMEOUT_MS);
  return { context, page: await context.newPage() };
}

async function navLabels(page: Page): Promise<string[]> {
  const nav = page.getByRole("navigation", { name: "Main" });
  await nav.waitFor();
  return (await nav.getByRole("link").allInnerTexts()).map((t) => t.trim());
}

async function expectCautions(page: Page): Promise<void> {
  const banner = page.getByRole("region", { name: "Cautions" });
  await banner.waitFor();
  expect(await banner.innerText()).toMatch(/Simulation only/);
}

describe("console foundation", { timeout: 90_000 }, () => {
  it("sends a signed-out visitor to the sign-in page, which shows the cautions banner", async () => {
    const { context, page } = await newPage();
    await page.goto(`${url}/arms`);
    await page.waitForURL(/\/sign-in\?next=%2Farms$/);
    await page.getByRole("heading", { name: "Sign in" }).waitFor();
    await expectCautions(page);
    expect(await page.title()).toMatch(/Jogwright/);
    await saveScreenshot(page, "sign-in");
    await context.close();
  });

  for (const account of DEMO_ACCOUNTS) {
    it(`shows ${account.username} exactly the pages their roles allow: ${account.nav.join(", ")}`, async () => {
      const { context, page } = await newPage();
      await page.goto(`${url}/`);
      await page.waitForURL(/\/sign-in/);
      await fillSignInForm(page, account.username, DEMO_PASSWORD);
      await page.getByRole("heading", { level: 1, name: /^Hello, / }).waitFor();
      expect(await navLabels(page)).toEqual(account.nav);
      await expectCautions(page);
      await page.getByRole("button", { name: "Sign out" }).waitFor();
      await saveScreenshot(page, `overview-${account.username}`);

      if (!account.nav.includes("Users")) {
        // A page the roles do not allow says so instead of showing it (the server refuses the data anyway).
        await page.goto(`${url}/admin/users`);
        await page.getByRole("heading", { name: "Not available for your roles" }).waitFor();
      }
      await context.close();
    });
  }

  it("lists the demo arms with their DH tables in mm and deg", async () => {
    const { context, page } = await newPage();
    await page.goto(`${url}/arms`);
    await fillSignInForm(page, "emeka", DEMO_PASSWORD);
    await page.waitForURL(/\/arms$/);
    await page.getByRole("heading", { level: 1, name: "Arms" }).waitFor();
    const tables = page.getByRole("main").getByRole("table");
    await tables.first().waitFor();
    expect(await tables.count()).toBeGreaterThanOrEqual(1);
    expect(await tables.first().innerText()).toMatch(/a \[mm\]/);
    await saveScreenshot(page, "arms");
    await context.close();
  });

  it("lets an admin create a user who can then sign in", async () => {
    const username = `e2e-${Date.now()}`;
    const displayName = `Browser Test ${username.slice(4)}`;
    const { context, page } = await newPage();
    await page.goto(`${url}/admin/users`);
    await fillSignInForm(page, "adele", DEMO_PASSWORD);
    await page.waitForURL(/\/admin\/users$/);
    await page.getByRole("heading", { level: 1, name: "Users" }).waitFor();
    await page.getByRole("cell", { name: "adele", exact: true }).waitFor();
    await saveScreenshot(page, "users");

    await page.getByRole("button", { name: "New user" }).click();
    const dialog = page.getByRole("dialog", { name: "New user" });
    await dialog.waitFor();

    // Field rules show as soon as a field is left.
    await dialog.getByLabel("User name").fill("ab");
    await dialog.getByLabel("Display name").focus();
    await dialog.getByText("a user name has at least 3 characters").waitFor();

    await dialog.getByLabel("User name").fill(username);
    await dialog.getByLabel("Display name").fill(displayName);
    await dialog.getByLabel("E-mail").fill(`${username}@example.test`);
    await dialog.getByLabel("Password").fill("browser-test-pass");
    await dialog.getByLabel("Engineer").check();
    await saveScreenshot(page, "users-new-user-form");
    await dialog.getByRole("button", { name: "Create user" }).click();
    await dialog.waitFor({ state: "detached" });
    await page.getByRole("cell", { name: username, exact: true }).waitFor();

    // The same user name again is refused by the server (409) and shown on the field.
    await page.getByRole("button", { name: "New user" }).click();
    await dialog.getByLabel("User name").fill(username);
    await dialog.getByLabel("Display name").fill("Duplicate");
    await dialog.getByLabel("E-mail").fill(`dup-${username}@example.test`);
    await dialog.getByLabel("Password").fill("browser-test-pass");
    await dialog.getByLabel("Operator").check();
    await dialog.getByRole("button", { name: "Create user" }).click();
    await dialog.locator("[aria-invalid=true]").first().waitFor();
    await saveScreenshot(page, "users-conflict");
    await dialog.getByRole("button", { name: "Cancel" }).click();

    await page.getByRole("button", { name: "Sign out" }).click();
    await page.waitForURL(/\/sign-in$/);

    await fillSignInForm(page, username, "browser-test-pass");
    await page.getByRole("heading", { level: 1, name: `Hello, ${displayName}` }).waitFor();
    // The new user was given the engineer role.
    expect(await navLabels(page)).toEqual(ENGINEER_NAV);
    await expectCautions(page);
    expect(await page.getByTestId("current-user").innerText()).toContain(displayName);
    await saveScreenshot(page, "new-user-overview");
    await context.close();
  });

  it("shows the server's message for a wrong password", async () => {
    const { context, page } = await newPage();
    await page.goto(`${url}/sign-in`);
    await fillSignInForm(page, "tomas", "not-the-password");
    const alert = page.getByRole("alert");
    await alert.waitFor();
    expect(await alert.innerText()).toMatch(/Sign-in failed/);
    expect(await alert.innerText()).toMatch(/password/i);
    expect(page.url()).toMatch(/\/sign-in/);
    await saveScreenshot(page, "sign-in-wrong-password");
    await context.close();
  });
});
