import { readFile } from "node:fs/promises";
import type { Page, TestInfo } from "@playwright/test";
import { keepScreenshot, SCREENSHOTS_WANTED, signIn } from "../support/browser.ts";
import { expect, test, uniqueTag } from "../support/fixtures.ts";

// Version files on the profile page (issue 12, "Export and import"): an engineer exports v1 as a download,
// imports that file back as a new draft with v1's hash, and sees a copy with one parameter changed refused
// for its SHA-256 with nothing saved; a file that is not a version file is refused in the browser.
// Screenshots of the first screen (1440×900: the version list and the import's outcome) go to
// tests/artifacts/version-files-*.png with JOGWRIGHT_SCREENSHOTS=1.

test.use({ viewport: { width: 1440, height: 900 } });

/** The first screen (scrolled to the top) as tests/artifacts/version-files-<name>.png, when screenshots are wanted. */
async function keepFirstScreen(page: Page, testInfo: TestInfo, name: string): Promise<void> {
  if (!SCREENSHOTS_WANTED) return;
  await page.evaluate(() => window.scrollTo(0, 0));
  await keepScreenshot(page, testInfo, `version-files-${name}`, name, { fullPage: false });
}

const jsonFile = (name: string, text: string) => ({ name, mimeType: "application/json", buffer: Buffer.from(text, "utf8") });

interface VersionFileJson {
  params: { tcpLinearCapMPerS: number };
  paramsSha256: string;
  version: { number: number };
}

test("an engineer exports v1, imports it as a new draft with the same hash, and a changed copy is refused for its SHA-256", async ({ page, setup }, testInfo) => {
  const engineer = await setup.person(["engineer"]);
  const operator = await setup.person(["operator"]);
  const profile = await setup.profile({ name: `E2E version files ${uniqueTag()}`, operator, arm: await setup.arm(6), engineer, note: "defaults" });
  const v1 = profile.latestVersion;
  const api = await setup.as(engineer.username, engineer.password);
  const versionsNow = async () => ((await (await api.get(`/api/profiles/${profile.id}`)).json()) as { versions: { number: number; paramsSha256: string; state: string }[] }).versions;

  await signIn(page, "", engineer.username, `/profiles/${profile.id}`, engineer.password);
  await expect(page.getByRole("heading", { level: 1, name: profile.name })).toBeVisible();
  const history = page.getByTestId("version-history");
  const row = (n: number) => history.locator(`tr[data-version="${n}"]`);
  await expect(history.locator("tbody tr")).toHaveCount(1);

  // --- Export: the server's attachment, named after the profile and version, holding v1's hash.
  const downloading = page.waitForEvent("download");
  await row(1).getByRole("link", { name: "Export v1 as a version file (JSON)" }).click();
  const download = await downloading;
  expect(download.suggestedFilename()).toBe(`profile-${profile.id}-v1.json`);
  const text = await readFile((await download.path())!, "utf8");
  const exported = JSON.parse(text) as VersionFileJson;
  expect(exported.version.number).toBe(1);
  expect(exported.paramsSha256).toBe(v1.paramsSha256);

  // --- Import the file as it was downloaded: a new draft v2 with v1's parameters and hash, selected.
  await page.getByTestId("version-file").setInputFiles(jsonFile(download.suggestedFilename(), text));
  const outcome = page.getByTestId("version-import-outcome");
  await expect(outcome.getByRole("status")).toContainText(`Imported as v2 (draft) from profile-${profile.id}-v1.json`);
  await expect(row(2)).toHaveAttribute("data-selected", "true");
  await expect(row(2)).toContainText("Draft");
  await expect(row(2).locator(`[title="${v1.paramsSha256}"]`)).toBeVisible();
  const afterImport = await versionsNow();
  expect(afterImport.map((v) => v.number)).toEqual([2, 1]);
  expect(afterImport[0]).toMatchObject({ state: "draft", paramsSha256: v1.paramsSha256 });
  // Compare versions opens on the new draft.
  await expect(page.getByLabel("To version").locator("option:checked")).toHaveText("v2 (draft)");
  await keepFirstScreen(page, testInfo, "imported");

  // --- A copy with one parameter changed (the TCP linear cap, +10 mm/s) and the old hash: refused, nothing saved.
  const changed = { ...exported, params: { ...exported.params, tcpLinearCapMPerS: exported.params.tcpLinearCapMPerS + 0.01 } };
  await page.getByTestId("version-file").setInputFiles(jsonFile("profile-edited.json", JSON.stringify(changed, null, 2)));
  const refusal = outcome.getByRole("alert");
  await expect(refusal).toContainText("Not imported: profile-edited.json");
  await expect(refusal).toContainText("The file's parameters do not match its SHA-256");
  await expect(refusal).toContainText(/SHA-256: the parameters hash to [0-9a-f]{12}…, the file says [0-9a-f]{12}…/);
  await expect(history.locator("tbody tr")).toHaveCount(2);
  await expect(history.locator("tr[data-selected]")).toHaveCount(0);
  expect((await versionsNow()).map((v) => v.number)).toEqual([2, 1]);
  await keepFirstScreen(page, testInfo, "hash-refused");

  // --- Not a version file at all: refused in the browser, nothing sent.
  await page.getByTestId("version-file").setInputFiles(jsonFile("arm.json", JSON.stringify({ convention: "standard", joints: [] })));
  await expect(outcome.getByRole("alert")).toContainText("arm.json is not a version file");
  await expect(outcome.getByRole("alert")).toContainText("Nothing was sent to the server.");
  expect((await versionsNow()).map((v) => v.number)).toEqual([2, 1]);
});

test("an operator exports their version, and is not offered the import", async ({ page, setup }) => {
  const operator = await setup.person(["operator"]);
  const profile = await setup.profile({ name: `E2E version files op ${uniqueTag()}`, operator, arm: await setup.arm(6) });
  await signIn(page, "", operator.username, `/profiles/${profile.id}`, operator.password);
  await expect(page.getByRole("heading", { level: 1, name: profile.name })).toBeVisible();
  await expect(page.getByTestId("version-file")).toHaveCount(0);
  const downloading = page.waitForEvent("download");
  await page.getByRole("link", { name: "Export v1 as a version file (JSON)" }).click();
  const download = await downloading;
  expect(download.suggestedFilename()).toBe(`profile-${profile.id}-v1.json`);
  expect((JSON.parse(await readFile((await download.path())!, "utf8")) as VersionFileJson).paramsSha256).toBe(profile.latestVersion.paramsSha256);
});
