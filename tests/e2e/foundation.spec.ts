import type { Page } from "@playwright/test";
import { DEMO_PASSWORD, fillSignInForm, saveScreenshot } from "../support/browser.ts";
import { expect, test, uniqueTag } from "../support/fixtures.ts";

// The console foundation in a real browser against the real server: sign-in, the role-dependent
// navigation, the cautions banner, creating a user as admin, sign-out and a wrong password.

// Menu order follows NAV_ITEMS in apps/console/src/app/navigation.ts.
const OPERATOR_NAV = ["Overview", "Drive", "Recordings", "Arms", "Profiles"];
const ENGINEER_NAV = ["Overview", "Drive", "Live", "Recordings", "Bench", "Arms", "Profiles", "Ceilings"];
const DEMO_ACCOUNTS: { username: string; nav: string[] }[] = [
  { username: "olena", nav: OPERATOR_NAV },
  { username: "tomas", nav: OPERATOR_NAV },
  { username: "emeka", nav: ENGINEER_NAV },
  { username: "sigrid", nav: ["Overview", "Live", "Recordings", "Bench", "Arms", "Profiles", "Reviews", "Ceilings", "Audit"] },
  { username: "adele", nav: ["Overview", "Arms", "Audit", "Users", "Outbox"] },
];

test.use({ viewport: { width: 1280, height: 860 } });

/** The main menu shows exactly these entries, in this order (an entry may carry a count badge, as Reviews does). */
async function expectNav(page: Page, labels: string[]): Promise<void> {
  await expect(page.getByRole("navigation", { name: "Main" }).getByRole("link")).toHaveText(labels.map((l) => new RegExp(`^${l}\\d*$`)));
}

async function expectCautions(page: Page): Promise<void> {
  await expect(page.getByRole("region", { name: "Cautions" })).toContainText(/Simulation only/);
}

test.describe("console foundation", () => {
  test("sends a signed-out visitor to the sign-in page, which shows the cautions banner", async ({ page }) => {
    await page.goto("/arms");
    await page.waitForURL(/\/sign-in\?next=%2Farms$/);
    await expect(page.getByRole("heading", { name: "Sign in" })).toBeVisible();
    await expectCautions(page);
    await expect(page).toHaveTitle(/Jogwright/);
    await saveScreenshot(page, "sign-in");
  });

  for (const account of DEMO_ACCOUNTS) {
    test(`shows ${account.username} exactly the pages their roles allow: ${account.nav.join(", ")}`, async ({ page }) => {
      await page.goto("/");
      await page.waitForURL(/\/sign-in/);
      await fillSignInForm(page, account.username, DEMO_PASSWORD);
      await expect(page.getByRole("heading", { level: 1, name: /^Hello, / })).toBeVisible();
      await expectNav(page, account.nav);
      await expectCautions(page);
      await expect(page.getByRole("button", { name: "Sign out" })).toBeVisible();
      await saveScreenshot(page, `overview-${account.username}`);

      if (!account.nav.includes("Users")) {
        // A page the roles do not allow says so instead of showing it (the server refuses the data anyway).
        await page.goto("/admin/users");
        await expect(page.getByRole("heading", { name: "Not available for your roles" })).toBeVisible();
      }
    });
  }

  test("lists the demo arms, each opening its DH table in mm and deg", async ({ page }) => {
    await page.goto("/arms");
    await fillSignInForm(page, "emeka", DEMO_PASSWORD);
    await page.waitForURL(/\/arms$/);
    await expect(page.getByRole("heading", { level: 1, name: "Arms" })).toBeVisible();
    const arms = page.getByTestId("arms-table").getByRole("link");
    // Waited for: the heading shows before the list has loaded.
    await expect.poll(() => arms.count()).toBeGreaterThanOrEqual(2); // the two demo arms (seed)
    await saveScreenshot(page, "arms");
    await arms.first().click();
    await page.waitForURL(/\/arms\/\d+$/);
    await expect(page.getByTestId("dh-table")).toContainText(/a \[mm\]/);
    await expect(page.getByTestId("dh-table")).toContainText(/α \[deg\]/);
  });

  test("lets an admin create a user who can then sign in", async ({ page }) => {
    const username = `e2e-${uniqueTag()}`;
    const displayName = `Browser Test ${username.slice(4)}`;
    await page.goto("/admin/users");
    await fillSignInForm(page, "adele", DEMO_PASSWORD);
    await page.waitForURL(/\/admin\/users$/);
    await expect(page.getByRole("heading", { level: 1, name: "Users" })).toBeVisible();
    await expect(page.getByRole("cell", { name: "adele", exact: true })).toBeVisible();
    await saveScreenshot(page, "users");

    await page.getByRole("button", { name: "New user" }).click();
    const dialog = page.getByRole("dialog", { name: "New user" });
    await expect(dialog).toBeVisible();

    // Field rules show as soon as a field is left.
    await dialog.getByLabel("User name").fill("ab");
    await dialog.getByLabel("Display name").focus();
    await expect(dialog.getByText("a user name has at least 3 characters")).toBeVisible();

    await dialog.getByLabel("User name").fill(username);
    await dialog.getByLabel("Display name").fill(displayName);
    await dialog.getByLabel("E-mail").fill(`${username}@example.test`);
    await dialog.getByLabel("Password").fill("browser-test-pass");
    await dialog.getByLabel("Engineer").check();
    await saveScreenshot(page, "users-new-user-form");
    await dialog.getByRole("button", { name: "Create user" }).click();
    await expect(dialog).toHaveCount(0);
    await expect(page.getByRole("cell", { name: username, exact: true })).toBeVisible();

    // The same user name again is refused by the server (409) and shown on the field.
    await page.getByRole("button", { name: "New user" }).click();
    await dialog.getByLabel("User name").fill(username);
    await dialog.getByLabel("Display name").fill("Duplicate");
    await dialog.getByLabel("E-mail").fill(`dup-${username}@example.test`);
    await dialog.getByLabel("Password").fill("browser-test-pass");
    await dialog.getByLabel("Operator").check();
    await dialog.getByRole("button", { name: "Create user" }).click();
    await expect(dialog.locator("[aria-invalid=true]").first()).toBeVisible();
    await saveScreenshot(page, "users-conflict");
    await dialog.getByRole("button", { name: "Cancel" }).click();

    await page.getByRole("button", { name: "Sign out" }).click();
    await page.waitForURL(/\/sign-in$/);

    await fillSignInForm(page, username, "browser-test-pass");
    await expect(page.getByRole("heading", { level: 1, name: `Hello, ${displayName}` })).toBeVisible();
    // The new user was given the engineer role.
    await expectNav(page, ENGINEER_NAV);
    await expectCautions(page);
    await expect(page.getByTestId("current-user")).toContainText(displayName);
    await saveScreenshot(page, "new-user-overview");
  });

  test("shows the server's message for a wrong password", async ({ page, setup }) => {
    // An account of this test's own, so repeated runs never bring a demo account near the sign-in limit.
    const person = await setup.person(["operator"]);
    await page.goto("/sign-in");
    await fillSignInForm(page, person.username, "not-the-password");
    const alert = page.getByRole("alert");
    await expect(alert).toContainText(/Sign-in failed/);
    await expect(alert).toContainText(/password/i);
    await expect(page).toHaveURL(/\/sign-in/);
    await saveScreenshot(page, "sign-in-wrong-password");
  });
});
