import { readFile } from "node:fs/promises";
import type { Locator } from "@playwright/test";
import { keepScreenshot, signIn } from "../support/browser.ts";
import { fakeGamepadScript, readTcpMm, recordStateFrames, setGamepad } from "../support/drive.ts";
import { expect, test, uniqueTag } from "../support/fixtures.ts";

// The arm library in the browser (issue 12): an engineer uploads a CSV DH table, sees it refused with its
// line and field when broken, previews the valid one (σ at the zero pose, the 3D view, σ at a moved pose),
// saves it, creates a profile on its revision and tool, drives it briefly, and downloads the recording's
// CSV export, whose header names the units. Screenshots at 1440×900 go to tests/artifacts/arms-*.png with JOGWRIGHT_SCREENSHOTS=1.

test.use({ viewport: { width: 1440, height: 900 } });

test.beforeEach(async ({ context }) => {
  await context.addInitScript(fakeGamepadScript());
});

/** A six-axis arm of our own (standard DH, mm and deg), with a 120 mm tool along the flange z axis. */
const ARM_CSV = [
  "# convention: standard",
  "# tool_mm: 1,0,0,0, 0,1,0,0, 0,0,1,120, 0,0,0,1",
  "type,a_mm,alpha_deg,d_mm,theta_deg,min_deg,max_deg,speed_deg_s,accel_deg_s2",
  "revolute,50,90,400,0,-170,170,150,600",
  "revolute,350,0,0,90,-120,120,150,600",
  "revolute,40,90,0,0,-150,150,180,720",
  "revolute,0,-90,380,0,-180,180,240,960",
  "revolute,0,90,0,-90,-120,120,240,960",
  "revolute,0,0,90,0,-360,360,300,1200",
].join("\r\n");

// Standard mapping as in DEFAULT_GAMEPAD_MAPPING: left stick y (axis 1, inverted) → vx; button 7 enables.
const ENABLING_BUTTON = 7;
const FORWARD = [0, -0.9, 0, 0];


/** Moves a range input as a drag would: its value, then the input event React listens to. */
async function setSlider(slider: Locator, value: number): Promise<void> {
  await slider.evaluate((el, v) => {
    Object.getOwnPropertyDescriptor(HTMLInputElement.prototype, "value")!.set!.call(el, String(v));
    el.dispatchEvent(new Event("input", { bubbles: true }));
  }, value);
}

const csvFile = (name: string, text: string) => ({ name, mimeType: "text/csv", buffer: Buffer.from(text, "utf8") });

test("an engineer uploads an arm file, previews and saves it, makes a profile on it, drives it and exports the recording", async ({ page, setup }, testInfo) => {
  test.setTimeout(120_000);
  const engineer = await setup.person(["engineer"]);
  const operator = await setup.person(["operator"]);
  const armName = `E2E arm ${uniqueTag()}`;
  const profileName = `E2E on ${armName}`;

  await signIn(page, "", engineer.username, "/arms", engineer.password);
  await expect(page.getByRole("heading", { level: 1, name: "Arms" })).toBeVisible();
  await page.getByRole("link", { name: "Upload arm file" }).click();
  await expect(page.getByRole("heading", { level: 1, name: "Upload an arm file" })).toBeVisible();

  // --- A broken file: every problem is listed with its line and field, and there is nothing to save.
  const broken = ARM_CSV.replace("revolute,350,0,0,90", "revolute,35o,0,0,90");
  await page.getByTestId("arm-file").setInputFiles(csvFile("broken.csv", broken));
  const issues = page.getByTestId("upload-issues");
  // Line 5 of the file: the second joint's row (two directive lines, the header, the first joint).
  await expect(issues.getByRole("row").filter({ hasText: "a_mm" })).toContainText(/5\s*a_mm\s*"35o" is not a number/);
  await expect(page.getByRole("button", { name: "Save arm" })).toHaveCount(0);
  await keepScreenshot(page, testInfo, "arms-upload-refused", "upload-refused");

  // --- The valid file: previewed with σ at the zero pose and in the 3D view before it is saved.
  await page.getByTestId("arm-file").setInputFiles(csvFile("six-axis.csv", ARM_CSV));
  await expect(issues).toHaveCount(0);
  const sigmaZero = page.getByTestId("upload-sigma-zero");
  await expect(sigmaZero).toContainText(/σ_min \d+\.\d mm/);
  // The server's σ at q = 0 and the browser's at the preview's start pose (zeros) agree: the same definition (lib/arm-measures.ts).
  const serverSigma = Number(await sigmaZero.getAttribute("data-value"));
  expect(serverSigma).toBeGreaterThan(0.05);
  const sigmaShown = page.getByTestId("preview-sigma-min");
  expect(Number(await sigmaShown.getAttribute("data-value"))).toBeCloseTo(serverSigma, 9);
  const preview = page.getByTestId("arm-preview");
  await expect(preview.locator("canvas")).toBeVisible();
  await expect.poll(async () => Number(await preview.getByTestId("arm-view").getAttribute("data-drawn-frames"))).toBeGreaterThan(0);
  await expect(page.getByTestId("dh-table").getByRole("row")).toHaveCount(7);
  await keepScreenshot(page, testInfo, "arms-upload-preview", "upload-preview");
  // A slider moves the arm: σ_min is computed again at the new pose (joint 5 towards 0°, the wrist singularity).
  const drawn = Number(await preview.getByTestId("arm-view").getAttribute("data-drawn-frames"));
  await setSlider(page.getByTestId("preview-joint-5"), Math.PI / 2 - 0.01);
  await expect.poll(async () => Number(await sigmaShown.getAttribute("data-value"))).toBeLessThan(serverSigma / 2);
  await expect.poll(async () => Number(await preview.getByTestId("arm-view").getAttribute("data-drawn-frames"))).toBeGreaterThan(drawn);

  // --- Save: a new arm, revision 1, with its "Flange tool".
  await page.getByLabel("Name").fill(armName);
  await page.getByLabel("Revision note").fill("Uploaded by the browser test.");
  await page.getByRole("button", { name: "Save arm" }).click();
  await page.waitForURL(/\/arms\/\d+$/);
  await expect(page.getByRole("heading", { level: 1, name: armName })).toBeVisible();
  await expect(page.getByTestId("arm-saved")).toContainText(`Saved ${armName} from six-axis.csv, revision 1.`);
  await expect(page.getByTestId("revisions-table").getByRole("row").nth(1)).toContainText(/1\s*current.*Uploaded by the browser test\./);
  await expect(page.getByTestId("tools-table")).toContainText("Flange tool");
  await expect(page.getByTestId("tools-table")).toContainText("(0.0, 0.0, 120.0) mm");
  await expect(page.getByTestId("base-and-tool")).toContainText("(0.0, 0.0, 120.0) mm · RPY (0.0, 0.0, 0.0) deg");
  await keepScreenshot(page, testInfo, "arms-detail", "detail");

  // --- A profile on the new arm's revision 1 and its tool.
  await page.goto("/profiles/new");
  await page.getByLabel("Profile name").fill(profileName);
  const operatorSelect = page.getByLabel("Operator");
  await operatorSelect.selectOption((await operatorSelect.locator("option", { hasText: `(${operator.username})` }).getAttribute("value"))!);
  const armSelect = page.getByLabel("Arm", { exact: true });
  await armSelect.selectOption((await armSelect.locator("option", { hasText: armName }).getAttribute("value"))!);
  await expect(page.getByLabel("Arm revision")).toContainText("Revision 1 (current)");
  await expect(page.getByLabel("Tool")).toHaveValue(/\d+/);
  await expect(page.getByLabel("Tool").locator("option:checked")).toHaveText("Flange tool");
  // Half of joint 1's rated 150 deg/s (the console's defaults).
  await expect(page.getByLabel("Joint 1 rate cap")).toHaveValue("75");
  // A long watchdog: this test is about the arm, and a busy 2-core machine can stall the page's input loop past 200 ms.
  await page.getByLabel("Input watchdog").fill("1500");
  await keepScreenshot(page, testInfo, "arms-new-profile", "new-profile");
  await page.getByRole("button", { name: "Create profile" }).click();
  await page.waitForURL(/\/profiles\/\d+$/);
  await expect(page.getByRole("heading", { level: 1, name: profileName })).toBeVisible();

  // --- Drive it briefly (an engineer's test drive of the draft) and see the revision and tool named.
  const states = recordStateFrames(page);
  await page.getByRole("link", { name: /Test-drive/ }).first().click();
  await expect(page.getByRole("heading", { level: 1, name: "Drive" })).toBeVisible();
  await expect(page.locator("[data-testid=connection-state][data-connection=open]")).toBeVisible();
  await page.getByRole("button", { name: /Start driving/ }).click();
  const info = page.getByTestId("session-info");
  await expect(info).toContainText(`on ${armName} revision 1 with Flange tool`, { useInnerText: true });
  await expect(page.getByTestId("tcp-x")).toHaveText(/^\s*-?\d/);
  const tcpBefore = await readTcpMm(page);
  await setGamepad(page, { pressed: { [ENABLING_BUTTON]: true }, axes: FORWARD });
  await expect(page.getByTestId("motion-state")).toHaveText("Moving", { useInnerText: true });
  await expect.poll(async () => Math.abs((await readTcpMm(page)).x - tcpBefore.x)).toBeGreaterThan(10);
  await setGamepad(page, { pressed: { [ENABLING_BUTTON]: false }, axes: [0, 0, 0, 0] });
  await expect(page.getByTestId("motion-state")).toHaveText(/^Stopped/, { useInnerText: true, timeout: 5000 });
  await expect.poll(() => states.latest()?.t ?? 0).toBeGreaterThan(1);
  await keepScreenshot(page, testInfo, "arms-drive", "drive");
  await page.getByRole("button", { name: "End session" }).click();
  await page.getByRole("link", { name: "Open its recording" }).click();
  await expect(page.getByRole("heading", { level: 1, name: /Replay of recording/ })).toBeVisible();
  // The replay names (and draws) the revision and tool the recorded version drove.
  await expect(page.getByTestId("replay-arm-revision")).toHaveText("revision 1 with Flange tool", { useInnerText: true });

  // --- The recording's CSV export: streamed as a download, the units in its header (recordings/export.ts).
  const recordingId = /recording=(\d+)/.exec(page.url())![1]!;
  await expect(page.getByRole("link", { name: `Download recording ${recordingId} as JSON` })).toHaveAttribute("href", `/api/recordings/${recordingId}/export.json`);
  const downloading = page.waitForEvent("download");
  await page.getByRole("link", { name: `Download recording ${recordingId} as CSV` }).click();
  const download = await downloading;
  const csv = await readFile((await download.path())!, "utf8");
  const [header, firstRow] = csv.split(/\r?\n/);
  expect(header!.split(",")).toEqual(
    expect.arrayContaining(["t_s", "q1_rad", "q6_rad", "qdot1_rad_s", "tcp_x_m", "tcp_roll_rad", "sigma_min_m", "lambda_m", "binding_limit", "binding_joint"]),
  );
  expect(firstRow!.split(",").length).toBe(header!.split(",").length);
  await keepScreenshot(page, testInfo, "arms-recording-exports", "recording-exports");
});

test("an engineer edits a used arm by form into a new revision and keeps its tools; others read the arm only", async ({ page, setup }, testInfo) => {
  const engineer = await setup.person(["engineer"]);
  const operator = await setup.person(["operator"]);
  const demo = await setup.arm(6);
  const created = await (await setup.as("emeka")).post("/api/arms", { data: { name: `E2E edited arm ${uniqueTag()}`, model: demo.model, note: "copied from the demo arm" } });
  expect(created.status(), await created.text()).toBe(201);
  const { arm } = (await created.json()) as { arm: typeof demo };
  await setup.profile({ name: `E2E on ${arm.name}`, operator, arm });

  await signIn(page, "", engineer.username, `/arms/${arm.id}`, engineer.password);
  await expect(page.getByRole("heading", { level: 1, name: arm.name })).toBeVisible();
  await page.getByRole("link", { name: "Edit (new revision)" }).click();
  // Before saving, the form says what saving does to the profiles on revision 1.
  await expect(page.getByRole("status").filter({ hasText: "Saving makes revision 2" })).toContainText("used by 1 profile version");
  const jointA = page.getByTestId("joint-fields-2").getByLabel("a (link length)");
  await expect(jointA).toHaveValue(String(Math.round(demo.model.joints[1]!.a * 1e9) / 1e6));
  await jointA.fill("420");
  await page.getByRole("button", { name: "Save as revision 2" }).click();
  // An edit needs a note saying what changed (editArmSchema), on its field.
  await expect(page.getByText("Say what changed (at least 3 characters)")).toBeVisible();
  await page.getByLabel("Revision note").fill("Longer upper arm: 420 mm.");
  await keepScreenshot(page, testInfo, "arms-edit-form", "edit-form");
  await page.getByRole("button", { name: "Save as revision 2" }).click();
  await page.waitForURL(new RegExp(`/arms/${arm.id}$`));
  await expect(page.getByTestId("arm-saved")).toHaveText("Saved revision 2: Longer upper arm: 420 mm. The profile version on revision 1 keeps driving it.");
  await expect(page.getByTestId("dh-table").getByRole("row").nth(2)).toContainText("420.0");
  const revisions = page.getByTestId("revisions-table").getByRole("row");
  await expect(revisions).toHaveCount(3);
  await expect(revisions.nth(1)).toContainText(/2\s*current.*Longer upper arm.*0 profile versions/);
  await expect(revisions.nth(2)).toContainText(/1.*1 profile version/);
  // The tool came along as a copy; add a second one and retire it.
  await expect(page.getByTestId("tools-table")).toContainText("Flange tool");
  await page.getByRole("button", { name: "Add tool" }).click();
  const dialog = page.getByRole("dialog");
  await dialog.getByLabel("Name").fill("Angled probe");
  await dialog.getByLabel("z in mm", { exact: true }).fill("250");
  await dialog.getByLabel("Pitch").fill("30");
  await dialog.getByLabel("Mass").fill("0.8");
  await keepScreenshot(page, testInfo, "arms-tool-dialog", "tool-dialog");
  await dialog.getByRole("button", { name: "Add tool" }).click();
  const probeRow = page.getByTestId("tools-table").getByRole("row").filter({ hasText: "Angled probe" });
  await expect(probeRow).toContainText("(0.0, 0.0, 250.0) mm · RPY (0.0, 30.0, 0.0) deg");
  await probeRow.getByRole("button", { name: "Retire tool Angled probe" }).click();
  await page.getByRole("dialog").getByRole("button", { name: "Retire tool" }).click();
  await expect(probeRow).toContainText("Retired");
  // The old revision stays readable.
  await page.getByRole("button", { name: "View revision 1" }).click();
  await expect(page.getByRole("status").filter({ hasText: "Viewing revision 1" })).toBeVisible();
  await expect(page.getByTestId("dh-table").getByRole("row").nth(2)).not.toContainText("420.0");
  await keepScreenshot(page, testInfo, "arms-old-revision", "old-revision");

  // An operator reads the arm: no edit, no tool actions.
  await page.getByRole("button", { name: "Sign out" }).click();
  await signIn(page, "", operator.username, `/arms/${arm.id}`, operator.password);
  await expect(page.getByRole("heading", { level: 1, name: arm.name })).toBeVisible();
  await expect(page.getByRole("link", { name: "Edit (new revision)" })).toHaveCount(0);
  await expect(page.getByRole("button", { name: "Add tool" })).toHaveCount(0);
});

test("an engineer moves a profile to the arm's revision 2 and another tool by saving a new version; v1 keeps revision 1", async ({ page, setup }, testInfo) => {
  const engineer = await setup.person(["engineer"]);
  const operator = await setup.person(["operator"]);
  const demo = await setup.arm(6);
  const emeka = await setup.as("emeka");
  const created = await emeka.post("/api/arms", { data: { name: `E2E moved arm ${uniqueTag()}`, model: demo.model, note: "copied from the demo arm" } });
  expect(created.status(), await created.text()).toBe(201);
  const { arm } = (await created.json()) as { arm: typeof demo & { latestRevisionId: number } };
  const profile = await setup.profile({ name: `E2E moving on ${arm.name}`, operator, arm });
  // v1 approved: the review of a version that moves away from it says so.
  await setup.submit(profile.latestVersion);
  await setup.approve(profile.latestVersion);
  // The arm's revision 2 (same kinematics, a new definition) with a second tool of its own.
  const edited = await emeka.put(`/api/arms/${arm.id}`, { data: { parentRevisionId: arm.latestRevisionId, model: demo.model, note: "Re-measured base" } });
  expect(edited.status(), await edited.text()).toBe(200);
  const rev2 = ((await edited.json()) as { revisions: { id: number; revision: number }[] }).revisions[0]!;
  expect(rev2.revision).toBe(2);
  const gripper = await emeka.post(`/api/arms/${arm.id}/revisions/${rev2.id}/tools`, { data: { name: "Long gripper", positionM: [0, 0, 0.3], rpyRad: [0, 0, 0], massKg: 1.2 } });
  expect(gripper.status(), await gripper.text()).toBe(201);

  await signIn(page, "", engineer.username, `/profiles/${profile.id}`, engineer.password);
  await expect(page.getByRole("heading", { level: 1, name: profile.name })).toBeVisible();
  const row = (n: number) => page.getByTestId("version-history").locator(`tr[data-version="${n}"]`);
  // Two lines: the revision, then the tool.
  await expect(row(1).getByTestId("version-arm")).toHaveText("Revision 1 Flange tool");
  await expect(row(1).getByTestId("version-arm")).toHaveAttribute("title", "Revision 1 · Flange tool");

  // The new-version form starts on v1's revision and tool; nothing says it moves.
  const revisionSelect = page.getByLabel("Arm revision");
  const toolSelect = page.getByLabel("Tool", { exact: true });
  await expect(revisionSelect.locator("option:checked")).toHaveText(/^Revision 1/);
  await expect(toolSelect.locator("option:checked")).toHaveText("Flange tool");
  await expect(page.getByTestId("arm-move")).toHaveCount(0);

  // Revision 2 picks its first tool; then the gripper. The form says what saving does.
  await revisionSelect.selectOption(String(rev2.id));
  await expect(toolSelect.locator("option:checked")).toHaveText("Flange tool");
  await toolSelect.selectOption({ label: "Long gripper" });
  await expect(page.getByTestId("arm-move")).toContainText(
    'v2 will drive revision 2 with tool "Long gripper" (v1 drives revision 1 with tool "Flange tool"); it goes through review again like any new version.',
  );
  await page.getByLabel("Note").fill("Onto revision 2 with the long gripper.");
  await page.getByTestId("arm-move").scrollIntoViewIfNeeded();
  await keepScreenshot(page, testInfo, "arms-version-moves-revision", "version-moves-revision");
  await page.getByRole("button", { name: "Save new version" }).click();
  await expect(page.getByRole("status").filter({ hasText: "Saved as v2" })).toBeVisible();

  // The list names what each version drives: v2 revision 2 with the gripper, v1 still revision 1.
  await expect(row(2).getByTestId("version-arm")).toHaveText("Revision 2 Long gripper moved from v1");
  await expect(row(1).getByTestId("version-arm")).toHaveText("Revision 1 Flange tool");
  // The form now starts from v2, on v2's revision and tool: no move.
  await expect(revisionSelect.locator("option:checked")).toHaveText(/^Revision 2/);
  await expect(toolSelect.locator("option:checked")).toHaveText("Long gripper");
  await expect(page.getByTestId("arm-move")).toHaveCount(0);
  await page.getByTestId("version-history").scrollIntoViewIfNeeded();
  await keepScreenshot(page, testInfo, "arms-version-list-revisions", "version-list-revisions");

  // A safety officer reviewing v2 reads that it moves the profile away from the approved v1's revision and tool.
  const { versions } = (await (await emeka.get(`/api/profiles/${profile.id}`)).json()) as { versions: { id: number; number: number }[] };
  const v2 = versions.find((v) => v.number === 2)!;
  const context = await page.context().browser()!.newContext({ baseURL: testInfo.project.use.baseURL, viewport: { width: 1440, height: 900 } });
  try {
    const officer = await context.newPage();
    await signIn(officer, "", "sigrid", `/reviews/${v2.id}`);
    await expect(officer.getByText("This version moves the profile to another arm revision or tool")).toBeVisible();
    await expect(officer.getByText('v2 drives revision 2 with tool "Long gripper"; the approved v1 drives revision 1 with tool "Flange tool".', { exact: false })).toBeVisible();
    await keepScreenshot(officer, testInfo, "arms-review-moves-revision", "review-moves-revision");
  } finally {
    await context.close();
  }
});
