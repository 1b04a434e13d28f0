import type { Page } from "@playwright/test";
import type { Arm, ProfileParams } from "@jogwright/shared";
import { saveScreenshot, signIn } from "../support/browser.ts";
import { readTcpMm } from "../support/drive.ts";
import { expect, test, uniqueTag, type Person, type ProfileRef, type Setup } from "../support/fixtures.ts";

// Issue 5 in a real browser against the real server: an engineer writes a profile for an operator in UI
// units (a ceiling warning above 250 mm/s, ISO 10218-1:2011 reduced speed), saves and submits; a safety
// officer reviews (difference, ceiling check, the built-in trials' evidence) and approves with a comment; a second
// version goes the same way while a stale page's save is refused (409 stale_parent) without overwriting
// anything; finally the operator sees the approved version as driveable and drives the arm with it.
// Each step is its own test: it makes the profile it starts from through the API (the steps before it,
// done by emeka and sigrid) for an operator of its own. The tests assume the site ceilings in force keep
// the default TCP linear ceiling of 250 mm/s.

test.use({ viewport: { width: 1400, height: 900 } });

/** Version 1 as the first step leaves it: the defaults with a 200 mm/s TCP cap. */
const v1Params = (defaults: ProfileParams): ProfileParams => ({ ...defaults, tcpLinearCapMPerS: 0.2 });
/** Version 2 as the third step saves it: 220 mm/s and a 12 % stick deadband. */
const v2Params = (v1: ProfileParams): ProfileParams => ({ ...v1, tcpLinearCapMPerS: 0.22, shaping: { ...v1.shaping, deadband: 0.12 } });

interface Stage {
  operator: Person;
  arm: Arm;
  profile: ProfileRef;
  v1: ProfileParams;
}

/** A profile for a new operator on the six-joint arm, v1 written by emeka; `upTo` says how far it has gone. */
async function profileAt(setup: Setup, upTo: "v1 submitted" | "v1 approved" | "v2 submitted" | "v2 approved"): Promise<Stage & { path: string }> {
  const operator = await setup.person(["operator"]);
  const arm = await setup.arm(6);
  const v1 = v1Params(setup.defaults(arm));
  const profile = await setup.profile({ name: `E2E pack opening ${uniqueTag()}`, operator, arm, params: v1, note: "First tuning for pack opening, 200 mm/s." });
  await setup.submit(profile.latestVersion);
  if (upTo !== "v1 submitted") {
    await setup.approve(profile.latestVersion, "First version; within ceilings.");
    if (upTo !== "v1 approved") {
      const v2 = await setup.saveVersion(profile.id, profile.latestVersion, v2Params(v1), "Faster TCP, wider deadband.");
      await setup.submit(v2);
      if (upTo === "v2 approved") await setup.approve(v2, "Faster TCP stays under the site ceiling.");
    }
  }
  return { operator, arm, profile, v1, path: `/profiles/${profile.id}` };
}

async function approveFromQueue(page: Page, profileName: string, versionNumber: number, comment: string): Promise<void> {
  await page.goto("/reviews");
  await expect(page.getByRole("heading", { level: 1, name: "Reviews" })).toBeVisible();
  await page.getByRole("link", { name: `Review ${profileName} v${versionNumber}` }).click();
  await expect(page.getByRole("heading", { level: 1, name: `Review: ${profileName}` })).toBeVisible();
  await expect(page.getByText("Within every site ceiling")).toBeVisible();
  // Submitted with the site's default evidence: a run of each of the arm's seven built-in trials.
  const evidence = page.getByTestId("evidence").getByTestId("evidence-table");
  await expect(evidence.getByRole("row")).toHaveCount(8); // the heading row and seven runs
  await expect(evidence.getByRole("rowheader", { name: "Straight line through wrist alignment" })).toBeVisible();
  await page.getByRole("button", { name: "Approve…" }).click();
  const dialog = page.getByRole("dialog", { name: /^Approve / });
  await expect(dialog).toBeVisible();
  await expect(dialog.getByText("An approval here is not a safety sign-off")).toBeVisible();
  // The comment is required.
  await dialog.getByRole("button", { name: "Approve and lock" }).click();
  await expect(dialog.getByText("an approval needs a comment")).toBeVisible();
  await dialog.getByLabel("Approval comment").fill(comment);
  await saveScreenshot(page, `profiles-approve-dialog-v${versionNumber}`);
  await dialog.getByRole("button", { name: "Approve and lock" }).click();
  await expect(dialog).toHaveCount(0);
  await expect(page.getByText(`${profileName} v${versionNumber} is approved and locked.`)).toBeVisible();
}

test.describe("profiles: edit in UI units, submit, review and approve", () => {
  test("lets an engineer create a profile for an operator, warns above the 250 mm/s ceiling, and submit v1", async ({ page, setup }) => {
    const operator = await setup.person(["operator"]);
    const profileName = `E2E pack opening ${uniqueTag()}`;
    await signIn(page, "", "emeka", "/profiles/new");
    await expect(page.getByRole("heading", { level: 1, name: "New profile" })).toBeVisible();
    await page.getByLabel("Profile name").fill(profileName);
    const operatorSelect = page.getByLabel("Operator");
    await operatorSelect.selectOption((await operatorSelect.locator("option", { hasText: `(${operator.username})` }).getAttribute("value"))!);
    const arm = page.getByLabel("Arm", { exact: true });
    await arm.selectOption((await arm.locator("option", { hasText: "6 joints" }).first().getAttribute("value"))!);

    // Defaults arrive in UI units: 250 mm/s, 75 deg/s for joint 1 (half of 150 deg/s rated).
    const tcp = page.getByLabel("TCP linear cap");
    await expect(tcp).toHaveValue("250");
    await expect(page.getByLabel("Joint 1 rate cap")).toHaveValue("75");

    await tcp.fill("300");
    await expect(page.getByTestId("ceiling-warning").first()).toContainText(/300 mm\/s exceeds the site ceiling of 250 mm\/s/);
    await expect(page.getByText("ISO 10218-1:2011, manual reduced speed: TCP ≤ 250 mm/s").first()).toBeVisible();
    await saveScreenshot(page, "profiles-new-ceiling-warning");

    // Validation as you type: a value the schema refuses is named on its field.
    await page.getByLabel("Input watchdog").fill("5");
    await expect(page.getByText("The watchdog must be at least 20 ms")).toBeVisible();
    await page.getByLabel("Input watchdog").fill("200");

    await tcp.fill("200");
    await expect(page.getByTestId("ceiling-warning")).toHaveCount(0);
    await page.getByLabel("Note").fill("First tuning for pack opening, 200 mm/s.");
    await page.getByRole("button", { name: "Create profile" }).click();

    await page.waitForURL(/\/profiles\/\d+$/);
    await expect(page.getByRole("heading", { level: 1, name: profileName })).toBeVisible();
    const history = page.getByTestId("version-history");
    await expect(history.locator("tr[data-version='1']").getByText("Draft")).toBeVisible();
    await page.getByRole("button", { name: "Submit v1 for review" }).click();
    await expect(history.locator("tr[data-version='1']").getByText("Submitted")).toBeVisible();
    await saveScreenshot(page, "profiles-v1-submitted");
  });

  test("lets the safety officer review v1 (no approved version yet) and approve it with a comment", async ({ page, setup }) => {
    const { profile } = await profileAt(setup, "v1 submitted");
    await signIn(page, "", "sigrid", "/reviews");
    await approveFromQueue(page, profile.name, 1, "First version for the operator; within ceilings.");
    await saveScreenshot(page, "profiles-v1-approved");
  });

  test("saves v2 in UI units, refuses a save from a stale page, and keeps that page's edits", async ({ page, setup }) => {
    const { profile, path } = await profileAt(setup, "v1 approved");
    // Two pages of the same engineer, both loaded from v1.
    await signIn(page, "", "emeka", path);
    const stalePage = await page.context().newPage();
    await stalePage.goto(path);
    for (const p of [page, stalePage]) {
      await expect(p.getByRole("heading", { level: 1, name: profile.name })).toBeVisible();
      await expect(p.getByText(/Starts from v1/)).toBeVisible();
    }

    const form = page.getByRole("form", { name: "Profile parameters" });
    await form.getByLabel("TCP linear cap").fill("320");
    await expect(form.getByTestId("ceiling-warning").first()).toBeVisible();
    await form.getByLabel("TCP linear cap").fill("220");
    await expect(form.getByTestId("ceiling-warning")).toHaveCount(0);
    await form.getByLabel("Stick deadband").fill("12");
    await form.getByLabel("Note").fill("Faster TCP, wider deadband.");
    await form.getByRole("button", { name: "Save new version" }).click();
    await expect(page.getByText("Saved as v2 (draft)")).toBeVisible();
    await page.getByRole("button", { name: "Submit v2 for review" }).first().click();
    await expect(page.getByTestId("version-history").locator("tr[data-version='2']").getByText("Submitted")).toBeVisible();

    // The compare view shows v1 → v2 with units; the changed rows are marked.
    const diff = page.getByTestId("params-diff").first();
    await expect(diff.locator("tr[data-changed='true']", { hasText: "TCP linear cap" })).toHaveText(/200\s*mm\/s[\s\S]*220\s*mm\/s/);
    await saveScreenshot(page, "profiles-v2-saved-compare");

    // The stale page still edits v1: its save is refused and its edits stay.
    const staleForm = stalePage.getByRole("form", { name: "Profile parameters" });
    await staleForm.getByLabel("Expo").fill("0.5");
    await staleForm.getByRole("button", { name: "Save new version" }).click();
    await expect(stalePage.getByText("Not saved: a newer version exists (v2)")).toBeVisible();
    await expect(stalePage.getByText(/Nothing was overwritten/)).toBeVisible();
    await expect(staleForm.getByLabel("Expo")).toHaveValue("0.5");
    await stalePage.getByRole("button", { name: "Compare my edits with v2" }).click();
    await expect(stalePage.getByRole("table", { name: /Parameters of v2 \(saved\) and Your edits/ })).toBeVisible();
    await saveScreenshot(stalePage, "profiles-stale-parent");
  });

  test("shows the safety officer the difference to v1 and the ceiling check, then approves v2", async ({ page, setup }) => {
    const { profile } = await profileAt(setup, "v2 submitted");
    await signIn(page, "", "sigrid", "/reviews");
    await page.getByRole("link", { name: `Review ${profile.name} v2` }).click();
    await expect(page.getByRole("heading", { name: "Difference to the approved version v1" })).toBeVisible();
    const changed = page.getByTestId("params-diff").locator("tr[data-changed='true']");
    await expect(changed).toHaveCount(2);
    await expect(changed.filter({ hasText: "TCP linear cap" })).toHaveText(/200\s*mm\/s[\s\S]*220\s*mm\/s/);
    await expect(changed.filter({ hasText: "Stick deadband" })).toHaveText(/10\s*%[\s\S]*12\s*%/);
    await saveScreenshot(page, "profiles-review-v2");
    await approveFromQueue(page, profile.name, 2, "Faster TCP stays under the site ceiling.");
  });

  test("shows the operator the approved v2 as driveable on their profiles page", async ({ page, setup }) => {
    const { operator, profile } = await profileAt(setup, "v2 approved");
    await signIn(page, "", operator.username, "/profiles", operator.password);
    await expect(page.getByRole("heading", { level: 1, name: "My profiles" })).toBeVisible();
    const row = page.getByTestId("profiles-table").locator("tr", { hasText: profile.name });
    // The row shows v2 twice: as the latest version and as the driveable one, approved.
    await expect(row.locator("td").nth(4)).toHaveText(/v2\s+Approved/, { useInnerText: true });
    await saveScreenshot(page, "profiles-operator");
    await row.getByRole("link", { name: profile.name }).click();
    await expect(page.getByTestId("driveable-version").getByText("v2")).toBeVisible();
    // Operators read; they get no form.
    await expect(page.getByRole("form", { name: "Profile parameters" })).toHaveCount(0);
    await saveScreenshot(page, "profiles-operator-detail");
  });

  test("lets the operator drive the arm with the newly approved v2", async ({ page, setup }) => {
    const { operator, profile } = await profileAt(setup, "v2 approved");
    await signIn(page, "", operator.username, "/drive", operator.password);
    await expect(page.getByRole("heading", { level: 1, name: "Drive" })).toBeVisible();
    const profileSelect = page.getByLabel("Profile", { exact: true });
    await profileSelect.selectOption((await profileSelect.locator("option", { hasText: profile.name }).first().getAttribute("value"))!);
    await expect(page.locator("[data-testid=connection-state][data-connection=open]")).toBeVisible();
    await page.getByRole("button", { name: /Start driving/ }).click();
    // The server started the session on the approved v2 (the only version an operator may drive).
    await expect(page.getByTestId("session-info")).toContainText(`Driving ${profile.name}, version 2 on`, { useInnerText: true });
    await expect(page.getByTestId("tcp-z")).toHaveText(/^\s*-?\d/);
    // Hold the enabling control (a touch pointer) and press-and-hold +Z (the mouse): the TCP rises.
    const enabling = page.getByTestId("enabling-control");
    await enabling.dispatchEvent("pointerdown", { pointerId: 31, pointerType: "touch", isPrimary: true, button: 0 });
    await expect(enabling).toHaveAttribute("aria-pressed", "true");
    const zBefore = (await readTcpMm(page)).z;
    const plusZ = page.getByRole("button", { name: "Jog +Z" });
    await plusZ.scrollIntoViewIfNeeded();
    const box = (await plusZ.boundingBox())!;
    await page.mouse.move(box.x + box.width / 2, box.y + box.height / 2);
    await page.mouse.down();
    await expect.poll(async () => (await readTcpMm(page)).z - zBefore, { timeout: 10_000 }).toBeGreaterThan(10);
    await saveScreenshot(page, "profiles-operator-drives-v2");
    await page.mouse.up();
    await enabling.dispatchEvent("pointerup", { pointerId: 31, pointerType: "touch", isPrimary: true, button: 0 });
    await page.getByRole("button", { name: "End session" }).click();
  });
});
