import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { Browser, BrowserContext, Page } from "playwright-core";
import { baseUrl, launchBrowser, saveScreenshot, signIn } from "../support/browser.ts";
import { readTcpMm } from "../support/drive.ts";

// Issue 5 in a real browser against the real server: an engineer writes a profile for olena in UI units
// (a ceiling warning above 250 mm/s, ISO 10218-1:2011 reduced speed), saves and submits; a safety officer
// reviews (difference, ceiling check, no evidence yet) and approves with a comment; a second version goes
// the same way while a stale page's save is refused (409 stale_parent) without overwriting anything;
// finally olena sees the approved version as driveable and drives the arm with it. The test assumes the site ceilings in force keep
// the default TCP linear ceiling of 250 mm/s.

const TIMEOUT_MS = 15_000;
const PROFILE_NAME = `E2E pack opening ${Date.now()}`;

let browser: Browser;
let url: string;
const contexts: BrowserContext[] = [];

beforeAll(async () => {
  url = baseUrl();
  browser = await launchBrowser();
}, 30_000);

afterAll(async () => {
  for (const c of contexts) await c.close().catch(() => undefined);
  await browser?.close();
});

/** A fresh browser context signed in as `username`, opened at `path`. */
async function signedInPage(username: string, path: string): Promise<Page> {
  const context = await browser.newContext({ viewport: { width: 1400, height: 900 } });
  context.setDefaultTimeout(TIMEOUT_MS);
  contexts.push(context);
  const page = await context.newPage();
  await signIn(page, url, username, path);
  return page;
}

async function approveFromQueue(page: Page, versionNumber: number, comment: string): Promise<void> {
  await page.goto(`${url}/reviews`);
  await page.getByRole("heading", { level: 1, name: "Reviews" }).waitFor();
  await page.getByRole("link", { name: `Review ${PROFILE_NAME} v${versionNumber}` }).click();
  await page.getByRole("heading", { level: 1, name: `Review: ${PROFILE_NAME}` }).waitFor();
  await page.getByText("Within every site ceiling").waitFor();
  await page.getByTestId("evidence").getByText("No trial evidence attached — scripted trials arrive with the tuning bench").waitFor();
  await page.getByRole("button", { name: "Approve…" }).click();
  const dialog = page.getByRole("dialog", { name: /^Approve / });
  await dialog.waitFor();
  await dialog.getByText("An approval here is not a safety sign-off").waitFor();
  // The comment is required.
  await dialog.getByRole("button", { name: "Approve and lock" }).click();
  await dialog.getByText("an approval needs a comment").waitFor();
  await dialog.getByLabel("Approval comment").fill(comment);
  await saveScreenshot(page, `profiles-approve-dialog-v${versionNumber}`);
  await dialog.getByRole("button", { name: "Approve and lock" }).click();
  await dialog.waitFor({ state: "detached" });
  await page.getByText(`${PROFILE_NAME} v${versionNumber} is approved and locked.`).waitFor();
}

describe("profiles: edit in UI units, submit, review and approve", { timeout: 180_000 }, () => {
  let profilePath = "";

  it("lets an engineer create a profile for olena, warns above the 250 mm/s ceiling, and submit v1", async () => {
    const page = await signedInPage("emeka", "/profiles/new");
    await page.getByRole("heading", { level: 1, name: "New profile" }).waitFor();
    await page.getByLabel("Profile name").fill(PROFILE_NAME);
    const operator = page.getByLabel("Operator");
    const olenaValue = await operator.locator("option", { hasText: "(olena)" }).getAttribute("value");
    await operator.selectOption(olenaValue!);
    const arm = page.getByLabel("Arm", { exact: true });
    const sixAxisValue = await arm.locator("option", { hasText: "6 joints" }).first().getAttribute("value");
    await arm.selectOption(sixAxisValue!);

    // Defaults arrive in UI units: 250 mm/s, 75 deg/s for joint 1 (half of 150 deg/s rated).
    const tcp = page.getByLabel("TCP linear cap");
    expect(await tcp.inputValue()).toBe("250");
    expect(await page.getByLabel("Joint 1 rate cap").inputValue()).toBe("75");

    await tcp.fill("300");
    const warning = page.getByTestId("ceiling-warning").first();
    await warning.waitFor();
    expect(await warning.innerText()).toMatch(/300 mm\/s exceeds the site ceiling of 250 mm\/s/);
    await page.getByText("ISO 10218-1:2011, manual reduced speed: TCP ≤ 250 mm/s").first().waitFor();
    await saveScreenshot(page, "profiles-new-ceiling-warning");

    // Validation as you type: a value the schema refuses is named on its field.
    await page.getByLabel("Input watchdog").fill("5");
    await page.getByText("The watchdog must be at least 20 ms").waitFor();
    await page.getByLabel("Input watchdog").fill("200");

    await tcp.fill("200");
    await page.getByTestId("ceiling-warning").waitFor({ state: "detached" });
    await page.getByLabel("Note").fill("First tuning for pack opening, 200 mm/s.");
    await page.getByRole("button", { name: "Create profile" }).click();

    await page.waitForURL(/\/profiles\/\d+$/);
    profilePath = new URL(page.url()).pathname;
    await page.getByRole("heading", { level: 1, name: PROFILE_NAME }).waitFor();
    const history = page.getByTestId("version-history");
    await history.locator("tr[data-version='1']").getByText("Draft").waitFor();
    await page.getByRole("button", { name: "Submit v1 for review" }).click();
    await history.locator("tr[data-version='1']").getByText("Submitted").waitFor();
    await saveScreenshot(page, "profiles-v1-submitted");
  });

  it("lets the safety officer review v1 (no approved version yet) and approve it with a comment", async () => {
    const page = await signedInPage("sigrid", "/reviews");
    await approveFromQueue(page, 1, "First version for olena; within ceilings.");
    await saveScreenshot(page, "profiles-v1-approved");
  });

  it("saves v2 in UI units, refuses a save from a stale page, and keeps that page's edits", async () => {
    // Two pages of the same engineer, both loaded from v1.
    const page = await signedInPage("emeka", profilePath);
    const stalePage = await page.context().newPage();
    await stalePage.goto(`${url}${profilePath}`);
    for (const p of [page, stalePage]) {
      await p.getByRole("heading", { level: 1, name: PROFILE_NAME }).waitFor();
      await p.getByText(/Loaded from v1/).waitFor();
    }

    const form = page.getByRole("form", { name: "Profile parameters" });
    await form.getByLabel("TCP linear cap").fill("320");
    await form.getByTestId("ceiling-warning").first().waitFor();
    await form.getByLabel("TCP linear cap").fill("220");
    await form.getByTestId("ceiling-warning").waitFor({ state: "detached" });
    await form.getByLabel("Stick deadband").fill("12");
    await form.getByLabel("Note").fill("Faster TCP, wider deadband.");
    await form.getByRole("button", { name: "Save new version" }).click();
    await page.getByText("Saved as v2 (draft)").waitFor();
    await page.getByRole("button", { name: "Submit v2 for review" }).first().click();
    await page.getByTestId("version-history").locator("tr[data-version='2']").getByText("Submitted").waitFor();

    // The compare view shows v1 → v2 with units; the changed rows are marked.
    const diff = page.getByTestId("params-diff").first();
    await diff.locator("tr[data-changed='true']", { hasText: "TCP linear cap" }).waitFor();
    expect(await diff.locator("tr[data-changed='true']", { hasText: "TCP linear cap" }).innerText()).toMatch(/200\s*mm\/s[\s\S]*220\s*mm\/s/);
    await saveScreenshot(page, "profiles-v2-saved-compare");

    // The stale page still edits v1: its save is refused and its edits stay.
    const staleForm = stalePage.getByRole("form", { name: "Profile parameters" });
    await staleForm.getByLabel("Expo").fill("0.5");
    await staleForm.getByRole("button", { name: "Save new version" }).click();
    await stalePage.getByText("Not saved: a newer version exists (v2)").waitFor();
    await stalePage.getByText(/Nothing was overwritten/).waitFor();
    expect(await staleForm.getByLabel("Expo").inputValue()).toBe("0.5");
    await stalePage.getByRole("button", { name: "Compare my edits with v2" }).click();
    await stalePage.getByRole("table", { name: /Parameters of v2 \(saved\) and Your edits/ }).waitFor();
    await saveScreenshot(stalePage, "profiles-stale-parent");
  });

  it("shows the safety officer the difference to v1 and the ceiling check, then approves v2", async () => {
    const page = await signedInPage("sigrid", "/reviews");
    await page.goto(`${url}/reviews`);
    await page.getByRole("link", { name: `Review ${PROFILE_NAME} v2` }).click();
    await page.getByRole("heading", { name: "Difference to the approved version v1" }).waitFor();
    const changed = page.getByTestId("params-diff").locator("tr[data-changed='true']");
    expect(await changed.count()).toBe(2);
    expect(await changed.filter({ hasText: "TCP linear cap" }).innerText()).toMatch(/200\s*mm\/s[\s\S]*220\s*mm\/s/);
    expect(await changed.filter({ hasText: "Stick deadband" }).innerText()).toMatch(/10\s*%[\s\S]*12\s*%/);
    await saveScreenshot(page, "profiles-review-v2");
    await approveFromQueue(page, 2, "Faster TCP stays under the site ceiling.");
  });

  it("shows olena the approved v2 as driveable on her profiles page", async () => {
    const page = await signedInPage("olena", "/profiles");
    await page.getByRole("heading", { level: 1, name: "My profiles" }).waitFor();
    const row = page.getByTestId("profiles-table").locator("tr", { hasText: PROFILE_NAME });
    await row.waitFor();
    // The row shows v2 twice: as the latest version and as the driveable one, approved.
    await expect.poll(async () => (await row.locator("td").nth(4).innerText()).replace(/\s+/g, " ")).toMatch(/v2 Approved/);
    await saveScreenshot(page, "profiles-olena");
    await row.getByRole("link", { name: PROFILE_NAME }).click();
    await page.getByTestId("driveable-version").getByText("v2").waitFor();
    // Operators read; they get no form.
    expect(await page.getByRole("form", { name: "Profile parameters" }).count()).toBe(0);
    await saveScreenshot(page, "profiles-olena-detail");
  });

  it("lets olena drive the arm with the newly approved v2", async () => {
    const page = await signedInPage("olena", "/drive");
    await page.getByRole("heading", { level: 1, name: "Drive" }).waitFor();
    const profileSelect = page.getByLabel("Profile", { exact: true });
    const option = profileSelect.locator("option", { hasText: PROFILE_NAME });
    await profileSelect.selectOption(await option.first().getAttribute("value"));
    await page.locator("[data-testid=connection-state][data-connection=open]").waitFor();
    await page.getByRole("button", { name: /Start driving/ }).click();
    const info = page.getByTestId("session-info");
    await info.waitFor();
    // The server started the session on the approved v2 (the only version an operator may drive).
    expect((await info.innerText()).replace(/\s+/g, " ")).toContain(`Driving ${PROFILE_NAME}, version 2 on`);
    await expect.poll(async () => (await page.getByTestId("tcp-z").innerText()).trim()).toMatch(/^-?\d/);
    // Hold the enabling control (a touch pointer) and press-and-hold +Z (the mouse): the TCP rises.
    const enabling = page.getByTestId("enabling-control");
    await enabling.dispatchEvent("pointerdown", { pointerId: 31, pointerType: "touch", isPrimary: true, button: 0 });
    await expect.poll(() => enabling.getAttribute("aria-pressed")).toBe("true");
    const zBefore = (await readTcpMm(page)).z;
    const plusZ = page.getByRole("button", { name: "Jog +Z" });
    await plusZ.scrollIntoViewIfNeeded();
    const box = (await plusZ.boundingBox())!;
    await page.mouse.move(box.x + box.width / 2, box.y + box.height / 2);
    await page.mouse.down();
    await expect.poll(async () => (await readTcpMm(page)).z - zBefore, { timeout: 10_000 }).toBeGreaterThan(10);
    await saveScreenshot(page, "profiles-olena-drives-v2");
    await page.mouse.up();
    await enabling.dispatchEvent("pointerup", { pointerId: 31, pointerType: "touch", isPrimary: true, button: 0 });
    await page.getByRole("button", { name: "End session" }).click();
  });
});
