import type { Locator, Page } from "@playwright/test";
import { keepScreenshot, signIn } from "../support/browser.ts";
import { expect, test, uniqueTag, type Setup } from "../support/fixtures.ts";

// Issue 13, items 9, 10 and 12 in a real browser against the real server: the outbox and the audit trail
// speak in labels, never codes; Save, Submit and a refused save answer beside the Save button, in view
// and focused, however long the form; a decimal comma is read as a point; damping is entered in mm; a
// period that ends before it starts is refused. Each test makes its own profile and people through the
// API and keeps a screenshot of what it checked (with JOGWRIGHT_SCREENSHOTS=1).

test.use({ viewport: { width: 1400, height: 900 } });

/** The element's box lies inside the window (the feedback was once 2,500 px above the Save button). */
async function expectInViewport(page: Page, locator: Locator): Promise<void> {
  const viewport = page.viewportSize()!;
  const box = await locator.boundingBox();
  expect(box, "the element is rendered").not.toBeNull();
  expect(box!.y).toBeGreaterThanOrEqual(0);
  expect(box!.y + box!.height).toBeLessThanOrEqual(viewport.height);
}

/** The test id of the focused element or of its nearest ancestor that has one. */
const focusedTestId = (page: Page) =>
  page.evaluate(() => (document.activeElement?.closest("[data-testid]") as HTMLElement | null)?.dataset.testid ?? null);

/** The answer beside a form's button (form-feedback) says `text`, lies inside the window and holds the focus. */
async function expectFeedbackInView(page: Page, text: string, timeout?: number): Promise<Locator> {
  const feedback = page.getByTestId("form-feedback");
  await expect(feedback).toContainText(text, timeout === undefined ? {} : { timeout });
  await expectInViewport(page, feedback);
  await expect.poll(() => focusedTestId(page)).toBe("form-feedback");
  return feedback;
}

/** Scrolls the form down to its button `name` and presses it; the answer beside it says `text`, in view and focused. */
async function pressAndExpectFeedback(page: Page, form: Locator, name: string, text: string): Promise<Locator> {
  const button = form.getByRole("button", { name });
  await button.scrollIntoViewIfNeeded();
  await button.click();
  return expectFeedbackInView(page, text);
}

/** A profile of a new operator on the six-joint arm, v1 a draft written by emeka. */
async function draftProfile(setup: Setup) {
  const operator = await setup.person(["operator"]);
  const arm = await setup.arm(6);
  const profile = await setup.profile({ name: `E2E words ${uniqueTag()}`, operator, arm, note: "defaults" });
  return { operator, arm, profile, path: `/profiles/${profile.id}` };
}

test.describe("words, units and feedback", () => {
  test("the outbox names each mail's kind and state in words, not codes like version-submitted", async ({ page, setup }, testInfo) => {
    const { profile } = await draftProfile(setup);
    // Submitting queues a "version-submitted" mail to the safety officers (reviews module). It runs the
    // arm's built-in trials first (the evidence rule), which takes a while on a busy machine.
    const engineer = await setup.as("emeka");
    const submitted = await engineer.post(`/api/versions/${profile.latestVersion.id}/submit`, { timeout: 120_000 });
    expect(submitted.ok()).toBe(true);
    await signIn(page, "", "adele", "/admin/outbox");
    const table = page.getByTestId("outbox-table");
    const row = table.getByRole("row").filter({ hasText: profile.name }).first();
    await expect(row).toContainText("Version submitted for review");
    await expect(table).not.toContainText(/\b(version|ceilings)-[a-z]+\b/);
    await expect(table.getByRole("columnheader", { name: "Kind" })).toHaveCount(0);
    await keepScreenshot(page, testInfo, "words-outbox-labels", "outbox-labels", { fullPage: false });
  });

  test("the audit trail names versions as v2 and entities and actions in words", async ({ page, setup }, testInfo) => {
    const { profile } = await draftProfile(setup);
    const v2 = await setup.saveVersion(profile.id, profile.latestVersion, setup.defaults(await setup.arm(6)), "second");
    await signIn(page, "", "sigrid", "/audit?entity=version&action=save");
    const table = page.getByTestId("audit-table");
    const row = table.getByRole("row").filter({ hasText: `"${profile.name}" v${v2.number}` }).first();
    await expect(row).toBeVisible();
    await expect(row).toContainText("Version");
    await expect(row).toContainText("Saved");
    // The row id of the version (what once read "version #7" for v6) appears nowhere.
    await expect(table).not.toContainText(/version #|#\d+/i);
    // Entities and actions as words, in the table and in the filters.
    await expect(page.getByLabel("About")).toContainText("Site ceilings");
    await expect(page.getByLabel("Action")).toContainText("Submitted for review");
    await expect(table).not.toContainText(/\b(ceilings|estop-latch|estop-reset)\b/);
    await keepScreenshot(page, testInfo, "words-audit-labels", "audit-labels", { fullPage: false });
  });

  test("the audit filter refuses a period whose From day is after its To day, with a message", async ({ page }, testInfo) => {
    await signIn(page, "", "sigrid", "/audit");
    await page.getByLabel("From day").fill("2026-12-03");
    await page.getByLabel("To day").fill("2026-12-01");
    await page.getByRole("button", { name: "Filter" }).click();
    await expect(page.getByText("The period ends before it starts")).toBeVisible();
    await expect(page.getByLabel("To day")).toHaveAttribute("aria-invalid", "true");
    expect(new URL(page.url()).searchParams.get("fromDay")).toBeNull();
    await keepScreenshot(page, testInfo, "words-audit-period-refused", "audit-period-refused", { fullPage: false });
  });

  test("Save at the bottom of the long form answers beside the button, in view and focused; so does Submit", async ({ page, setup }, testInfo) => {
    const { path } = await draftProfile(setup);
    await signIn(page, "", "emeka", path);
    const form = page.getByRole("form", { name: "Profile parameters" });
    await form.getByLabel("Note").fill("Saved from the bottom of the form.");
    const feedback = await pressAndExpectFeedback(page, form, "Save new version", "Saved as v2 (draft)");
    await keepScreenshot(page, testInfo, "words-save-feedback-in-view", "save-feedback-in-view", { fullPage: false });

    await feedback.getByRole("button", { name: "Submit v2 for review" }).click();
    // The submission runs the arm's built-in trials first (the evidence rule): slow on a busy machine.
    await expectFeedbackInView(page, "v2 is submitted for review", 120_000);
    await keepScreenshot(page, testInfo, "words-submit-feedback-in-view", "submit-feedback-in-view", { fullPage: false });
  });

  test("a save refused because a newer version exists says so beside the Save button, in view and focused", async ({ page, setup }, testInfo) => {
    const { profile, arm, path } = await draftProfile(setup);
    await signIn(page, "", "emeka", path);
    const form = page.getByRole("form", { name: "Profile parameters" });
    await expect(form.getByLabel("Expo")).toBeVisible();
    // Someone else saves v2 meanwhile.
    await setup.saveVersion(profile.id, profile.latestVersion, setup.defaults(arm), "meanwhile");
    await form.getByLabel("Expo").fill("0.5");
    await pressAndExpectFeedback(page, form, "Save new version", "Not saved: a newer version exists (v2)");
    await expect(form.getByLabel("Expo")).toHaveValue("0.5");
    await keepScreenshot(page, testInfo, "words-conflict-feedback-in-view", "conflict-feedback-in-view", { fullPage: false });
  });

  test("a decimal comma reads as a point (150,5 is 150.5 mm/s, never 1505), an ambiguous 1,500 is refused; damping is in mm", async ({ page, setup }, testInfo) => {
    const { path } = await draftProfile(setup);
    await signIn(page, "", "emeka", path);
    const form = page.getByRole("form", { name: "Profile parameters" });
    // Damping in mm, as the drive page shows it: the defaults' ε = 0.04 m (defaultProfileParams).
    await expect(form.getByLabel("Damped region ε (σ_min below)")).toHaveValue("40");
    await expect(form.getByText("mm", { exact: true }).first()).toBeVisible();

    const tcp = form.getByLabel("TCP linear cap");
    // Focus scrolls a field into view above the sticky footer, never behind it (scroll-margin-bottom).
    await tcp.evaluate((el: HTMLElement) => el.focus());
    const fieldBox = (await tcp.boundingBox())!;
    const footerBox = (await form.getByTestId("form-footer").boundingBox())!;
    expect(fieldBox.y + fieldBox.height).toBeLessThanOrEqual(footerBox.y);
    await tcp.fill("");
    await tcp.pressSequentially("1,500");
    await expect(form.getByText("Write 1.5 or 1500")).toBeVisible();
    await tcp.fill("");
    await tcp.pressSequentially("150,5");
    // The box keeps what was typed while typing ("1,5" may still become "1,500") and reads it on leaving.
    await expect(tcp).toHaveValue("150,5");
    await tcp.blur();
    await expect(tcp).toHaveValue("150.5");
    await expect(form.getByText("Write 1.5 or 1500")).toHaveCount(0);
    await keepScreenshot(page, testInfo, "words-comma-decimal", "comma-decimal", { fullPage: false });
    await form.getByRole("button", { name: "Save new version" }).click();
    await expect(page.getByTestId("form-feedback")).toContainText("Saved as v2 (draft)");
    // The saved version reads 150.5 mm/s in the comparison of v1 and v2.
    const diff = page.getByTestId("params-diff").first();
    await expect(diff.locator("tr[data-changed='true']", { hasText: "TCP linear cap" })).toHaveText(/250\s*mm\/s[\s\S]*150\.5\s*mm\/s/);
  });

  test("saving the ceilings answers beside the button, in view and focused", async ({ page }, testInfo) => {
    await signIn(page, "", "sigrid", "/ceilings");
    const form = page.getByRole("form", { name: "Site ceilings" });
    // The same values again: a new revision, nothing flagged.
    await form.getByLabel("Note").fill("Browser test: same values.");
    await pressAndExpectFeedback(page, form, "Save ceilings", "Ceilings saved");
    await keepScreenshot(page, testInfo, "words-ceilings-feedback-in-view", "ceilings-feedback-in-view", { fullPage: false });
  });
});
