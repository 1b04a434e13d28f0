import type { APIRequestContext } from "@playwright/test";
import { keepScreenshot, signIn } from "../support/browser.ts";
import { expect, test, uniqueTag, type Person, type ProfileRef, type Setup, type VersionRef } from "../support/fixtures.ts";

// Issue 13's workflow pass in a real browser against the real server: re-confirming a flagged version
// under the current ceilings (found on the ceilings page by its human name), the explicit "Roll back to vN"
// confirmation, the author's withdrawal, the review queue's count in the navigation, the new-version
// form's choice of base version, and the profile page's test-drive link. Each test makes its people and
// profiles through the API (emeka writes, sigrid approves) and keeps a screenshot as an artefact (with JOGWRIGHT_SCREENSHOTS=1).

test.use({ viewport: { width: 1400, height: 900 } });


async function json<T>(response: Awaited<ReturnType<APIRequestContext["get"]>>, what: string): Promise<T> {
  if (!response.ok()) throw new Error(`${what}: ${response.status()} ${await response.text()}`);
  return (await response.json()) as T;
}

/** A new operator's profile on the six-joint arm with `watchdogMs`, v1 written by emeka. */
async function profileFor(setup: Setup, watchdogMs = 200): Promise<{ operator: Person; profile: ProfileRef }> {
  const operator = await setup.person(["operator"]);
  const arm = await setup.arm(6);
  const profile = await setup.profile({ name: `E2E workflow ${uniqueTag()}`, operator, arm, params: { ...setup.defaults(arm), watchdogMs }, note: `watchdog ${watchdogMs} ms` });
  return { operator, profile };
}

async function saveNext(setup: Setup, profileId: number, parent: VersionRef, watchdogMs: number): Promise<VersionRef> {
  const arm = await setup.arm(6);
  return setup.saveVersion(profileId, parent, { ...setup.defaults(arm), watchdogMs }, `watchdog ${watchdogMs} ms`);
}

/**
 * Submit as emeka, waiting up to 60 s: the server runs the arm's seven built-in trials as evidence (the
 * site's default rule), which the first submission after a start (the trial pool warming up) or a busy
 * machine can take longer than the fixture's 15 s for.
 */
async function submit(setup: Setup, version: VersionRef): Promise<void> {
  await json(await (await setup.as("emeka")).post(`/api/versions/${version.id}/submit`, { timeout: 60_000 }), `submit version ${version.id}`);
}

async function setCeilings(sigrid: APIRequestContext, change: (c: Record<string, unknown>) => Record<string, unknown>, note: string): Promise<void> {
  const current = await json<{ revision: number; ceilings: Record<string, unknown> }>(await sigrid.get("/api/ceilings"), "read ceilings");
  await json(await sigrid.put("/api/ceilings", { data: { revision: current.revision, ceilings: change(current.ceilings), note } }), "set ceilings");
}

test("a safety officer finds a flagged version by its name on the ceilings page and re-confirms it under the current ceilings", async ({ page, setup }, testInfo) => {
  // 295 ms is within the default 300 ms watchdog ceiling and above a lowered 290 ms.
  const { profile } = await profileFor(setup, 295);
  await submit(setup, profile.latestVersion);
  await setup.approve(profile.latestVersion);
  const sigrid = await setup.as("sigrid");
  let original: number | null = null;
  try {
    await setCeilings(sigrid, (c) => ((original = c.watchdogMaxMs as number), { ...c, watchdogMaxMs: 290 }), "E2E: lowered for a moment");
    await setCeilings(sigrid, (c) => ({ ...c, watchdogMaxMs: original }), "E2E: back as it was");
  } catch (error) {
    if (original !== null) await setCeilings(sigrid, (c) => ({ ...c, watchdogMaxMs: original }), "E2E: back as it was");
    throw error;
  }

  await signIn(page, "", "sigrid", "/ceilings");
  const label = `${profile.name} v1`;
  const entry = page.getByTestId("flagged-list").locator(`[data-version-id="${profile.latestVersion.id}"]`);
  await expect(entry.getByRole("link", { name: label, exact: true })).toBeVisible();
  await expect(entry).toContainText("Complies with the ceilings in force now.");
  await keepScreenshot(page, testInfo, "workflow-flagged-on-ceilings-page", "flagged-on-ceilings-page");
  await entry.getByRole("link", { name: `Re-confirm ${label}` }).click();

  await expect(page.getByRole("heading", { name: "Flagged above the site ceilings" })).toBeVisible();
  await page.getByRole("button", { name: "Re-confirm under current ceilings…" }).click();
  const dialog = page.getByRole("dialog", { name: `Re-confirm ${label} under the current ceilings` });
  await dialog.getByRole("button", { name: "Re-confirm" }).click();
  await expect(dialog.getByText("say why it may be driven again")).toBeVisible();
  await dialog.getByLabel("Comment").fill("The lowered watchdog was a mistake; 295 ms is within the ceiling again.");
  await dialog.getByRole("button", { name: "Re-confirm" }).click();
  await expect(page.getByText(`${label} is re-confirmed under the current ceilings`)).toBeVisible();
  const history = page.getByTestId("flag-history").getByRole("listitem");
  await expect(history).toHaveCount(2);
  await expect(history.nth(0)).toHaveAttribute("data-kind", "flag");
  await expect(history.nth(1)).toHaveAttribute("data-kind", "reconfirm");
  await keepScreenshot(page, testInfo, "workflow-reconfirmed", "reconfirmed");
  const detail = await json<{ profile: { driveableVersionId: number | null } }>(await sigrid.get(`/api/profiles/${profile.id}`), "read profile");
  expect(detail.profile.driveableVersionId).toBe(profile.latestVersion.id);
});

test("approving a version older than the approved one asks for an explicit roll back to it", async ({ page, setup }, testInfo) => {
  const { profile } = await profileFor(setup);
  await submit(setup, profile.latestVersion);
  await setup.approve(profile.latestVersion);
  const v2 = await saveNext(setup, profile.id, profile.latestVersion, 210);
  const v3 = await saveNext(setup, profile.id, v2, 220);
  await submit(setup, v3);
  await setup.approve(v3);
  await submit(setup, v2);

  await signIn(page, "", "sigrid", `/reviews/${v2.id}`);
  await expect(page.getByText("Approving this rolls back to v2")).toBeVisible();
  await page.getByRole("button", { name: "Roll back to v2…" }).click();
  const dialog = page.getByRole("dialog", { name: /^Roll back to v2/ });
  await expect(dialog.getByText("This rolls the operator back from v3 to v2")).toBeVisible();
  await dialog.getByLabel("Approval comment").fill("v3 judders near the wrist; back to v2.");
  await dialog.getByRole("button", { name: "Roll back to v2" }).click();
  await expect(dialog.getByRole("alert")).toHaveText("Tick “Roll back to v2” to confirm the rollback.");
  await dialog.getByRole("checkbox", { name: "Roll back to v2" }).check();
  await keepScreenshot(page, testInfo, "workflow-rollback-confirm", "rollback-confirm");
  await dialog.getByRole("button", { name: "Roll back to v2" }).click();
  await expect(page.getByText(`${profile.name} v2 is approved and locked.`)).toBeVisible();

  const detail = await json<{ versions: { id: number; state: string }[] }>(await (await setup.as("sigrid")).get(`/api/profiles/${profile.id}`), "read profile");
  expect(detail.versions.find((v) => v.id === v3.id)?.state).toBe("superseded");
  expect(detail.versions.find((v) => v.id === v2.id)?.state).toBe("approved");
  const audit = await json<{ entries: { entityId: string; action: string }[] }>(
    await (await setup.as("sigrid")).get(`/api/audit?entity=version&action=rollback`),
    "read audit",
  );
  expect(audit.entries.some((e) => e.entityId === String(v2.id))).toBe(true);
});

test("the author withdraws a submission with a note; it shows in the history and leaves the queue", async ({ page, setup }, testInfo) => {
  const { profile } = await profileFor(setup);
  await submit(setup, profile.latestVersion);

  await signIn(page, "", "emeka", `/profiles/${profile.id}`);
  await page.getByRole("button", { name: "Withdraw v1 from review" }).click();
  const dialog = page.getByRole("dialog", { name: "Withdraw v1 from review" });
  await dialog.getByLabel("Note").fill("Found a better deadband; will submit v2.");
  await dialog.getByRole("button", { name: "Withdraw" }).click();
  await expect(page.getByText("v1 is withdrawn from review")).toBeVisible();
  const row = page.getByTestId("version-history").locator('tr[data-version="1"]');
  await expect(row).toContainText("Withdrawn");
  await expect(row).toContainText("Found a better deadband; will submit v2.");
  await expect(page.getByRole("button", { name: "Withdraw v1 from review" })).toHaveCount(0);
  await keepScreenshot(page, testInfo, "workflow-withdrawn", "withdrawn");
  const queue = await json<{ versions: { id: number }[] }>(await (await setup.as("sigrid")).get("/api/reviews"), "read queue");
  expect(queue.versions.map((v) => v.id)).not.toContain(profile.latestVersion.id);
});

test("a safety officer sees the number of submissions waiting beside Reviews in the navigation", async ({ page, setup }, testInfo) => {
  const officer = await setup.person(["safety_officer"]);
  const { profile } = await profileFor(setup);
  await submit(setup, profile.latestVersion);
  const waiting = async () => (await json<{ versions: unknown[] }>(await (await setup.as("sigrid")).get("/api/reviews"), "read queue")).versions.length;

  await signIn(page, "", officer.username, "/", officer.password);
  const badge = page.getByRole("navigation", { name: "Main" }).getByRole("link", { name: /^Reviews/ }).getByTestId("nav-count");
  await expect(badge).toHaveText(String(await waiting()));
  await keepScreenshot(page, testInfo, "workflow-queue-badge", "queue-badge");

  // Another submission arrives; the badge follows (its background poll, or at once on a reload).
  const other = await profileFor(setup);
  await submit(setup, other.profile.latestVersion);
  await page.reload();
  await expect(badge).toHaveText(String(await waiting()));
  // An operator has no Reviews item and so no badge.
  const context = await page.context().browser()!.newContext({ baseURL: testInfo.project.use.baseURL });
  try {
    const operatorPage = await context.newPage();
    await signIn(operatorPage, "", other.operator.username, "/", other.operator.password);
    await expect(operatorPage.getByRole("navigation", { name: "Main" }).getByRole("link", { name: "Profiles" })).toBeVisible();
    await expect(operatorPage.getByTestId("nav-count")).toHaveCount(0);
  } finally {
    await context.close();
  }
});

test("the new-version form starts from the approved version, not a newer rejected one, and from any version chosen", async ({ page, setup }, testInfo) => {
  const { profile } = await profileFor(setup, 250);
  await submit(setup, profile.latestVersion);
  await setup.approve(profile.latestVersion);
  const v2 = await saveNext(setup, profile.id, profile.latestVersion, 150);
  await submit(setup, v2);
  await json(await (await setup.as("sigrid")).post(`/api/versions/${v2.id}/reject`, { data: { reason: "Watchdog too short for the cell." } }), "reject v2");

  await signIn(page, "", "emeka", `/profiles/${profile.id}`);
  const startFrom = page.getByLabel("Start from");
  await expect(startFrom).toHaveValue(String(profile.latestVersion.id));
  const watchdog = page.getByLabel("Input watchdog");
  await expect(watchdog).toHaveValue("250");
  await startFrom.selectOption(String(v2.id));
  await expect(watchdog).toHaveValue("150");
  await startFrom.selectOption(String(profile.latestVersion.id));
  await expect(watchdog).toHaveValue("250");
  await watchdog.fill("240");
  await keepScreenshot(page, testInfo, "workflow-base-version", "base-version");
  await page.getByRole("button", { name: "Save new version" }).click();
  await expect(page.getByText("Saved as v3")).toBeVisible();
  const detail = await json<{ versions: { number: number; parentVersionId: number | null; params: { watchdogMs: number } }[] }>(
    await (await setup.as("emeka")).get(`/api/profiles/${profile.id}`),
    "read profile",
  );
  expect(detail.versions.find((v) => v.number === 3)).toMatchObject({ parentVersionId: profile.latestVersion.id, params: { watchdogMs: 240 } });
});

test("the profile page links each version its reader may drive to the drive page with that version selected", async ({ page, setup }, testInfo) => {
  const { operator, profile } = await profileFor(setup);
  await submit(setup, profile.latestVersion);
  await setup.approve(profile.latestVersion);
  const v2 = await saveNext(setup, profile.id, profile.latestVersion, 210);

  await signIn(page, "", "emeka", `/profiles/${profile.id}`);
  await expect(page.getByRole("link", { name: "Test-drive v2" })).toHaveAttribute("href", `/drive?version=${v2.id}`);
  await expect(page.getByRole("link", { name: "Test-drive v1" })).toHaveAttribute("href", `/drive?version=${profile.latestVersion.id}`);
  await keepScreenshot(page, testInfo, "workflow-test-drive-links", "test-drive-links");

  // The operator drives only the approved version; a safety officer drives none.
  const context = await page.context().browser()!.newContext({ baseURL: testInfo.project.use.baseURL });
  try {
    const operatorPage = await context.newPage();
    await signIn(operatorPage, "", operator.username, `/profiles/${profile.id}`, operator.password);
    await expect(operatorPage.getByRole("link", { name: "Drive v1" })).toHaveAttribute("href", `/drive?version=${profile.latestVersion.id}`);
    await expect(operatorPage.getByRole("link", { name: /drive v2/i })).toHaveCount(0);
    const officerPage = await (await page.context().browser()!.newContext({ baseURL: testInfo.project.use.baseURL })).newPage();
    await signIn(officerPage, "", "sigrid", `/profiles/${profile.id}`);
    await expect(officerPage.getByTestId("version-history")).toBeVisible();
    await expect(officerPage.getByRole("link", { name: /drive v/i })).toHaveCount(0);
    await officerPage.context().close();
  } finally {
    await context.close();
  }
});
