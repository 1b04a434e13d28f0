import type { Locator, Page } from "@playwright/test";
import { STOP_KIND_LABELS, type StopKind } from "@jogwright/shared";
import { keepScreenshot, signIn } from "../support/browser.ts";
import { fakeGamepadScript, recordStateFrames, setGamepad, startDriving } from "../support/drive.ts";
import { expect, test } from "../support/fixtures.ts";

// The drive workspace on a 1440×900 screen (issue 13, items 11 and 13): what driving needs fits the first
// screen and the rest folds; the charts' axes, colours and threshold lines; the replay's event markers,
// speed and title. An operator with an approved version of the console's default profile (ε 40 mm, the
// stop-before guard at 20 mm) drives the simulated gamepad of tests/support/drive.ts. Every test keeps a
// screenshot with JOGWRIGHT_SCREENSHOTS=1 (tests/artifacts/layout-*.png, attached to the report too).

const VIEWPORT = { width: 1440, height: 900 };
// Standard mapping (DEFAULT_GAMEPAD_MAPPING): left stick y (axis 1, inverted) → vx; button 7 enables.
const LEFT_STICK_Y = 1;
const ENABLING_BUTTON = 7;

test.use({ viewport: VIEWPORT });

test.beforeEach(async ({ context }) => {
  await context.addInitScript(fakeGamepadScript());
});

/** The element lies wholly inside the 1440×900 viewport, the page not scrolled. */
async function expectOnFirstScreen(locator: Locator, what: string): Promise<void> {
  await expect(locator, what).toBeVisible();
  const box = (await locator.boundingBox())!;
  expect(box.x, `${what}: left edge`).toBeGreaterThanOrEqual(0);
  expect(box.y, `${what}: top edge`).toBeGreaterThanOrEqual(0);
  expect(box.x + box.width, `${what}: right edge`).toBeLessThanOrEqual(VIEWPORT.width);
  expect(box.y + box.height, `${what}: bottom edge`).toBeLessThanOrEqual(VIEWPORT.height);
}

/** The y tick labels a chart drew (data-y-ticks, written by its axis formatter). */
async function yTicks(page: Page, chart: string): Promise<string[]> {
  return ((await page.getByTestId(`chart-${chart}`).getAttribute("data-y-ticks")) ?? "").split(" ").filter(Boolean);
}

const escapeRegExp = (text: string) => text.replace(/[.*+?^${}()|[\]\\]/g, "\\$&");

/** Sensible ticks: at least three, all different, some not zero. */
function isSensible(ticks: string[]): boolean {
  return ticks.length >= 3 && new Set(ticks).size === ticks.length && ticks.some((t) => Number(t) !== 0);
}

test.describe("drive workspace at 1440×900", () => {
  test("the view, STOP, the enabling control, the jog controls, the singularity indicator and a chart fit the first screen; the other panels fold", async ({ page, setup }, testInfo) => {
    const { operator, profile } = await setup.operatorWithApprovedProfile();
    await signIn(page, "", operator.username, "/drive", operator.password);
    await startDriving(page, profile.name);
    await expect(page.getByTestId("chart-jointRates")).not.toHaveAttribute("data-points", "0");

    expect(await page.evaluate(() => window.scrollY)).toBe(0);
    await expectOnFirstScreen(page.getByTestId("arm-view"), "3D view");
    await expectOnFirstScreen(page.getByRole("button", { name: "STOP", exact: true }), "STOP");
    await expectOnFirstScreen(page.getByTestId("enabling-control"), "enabling control");
    await expectOnFirstScreen(page.getByRole("region", { name: "Jog", exact: true }), "jog controls");
    await expectOnFirstScreen(page.getByRole("region", { name: "Singularity" }), "singularity indicator");
    await expectOnFirstScreen(page.getByTestId("chart-jointRates").locator("xpath=ancestor::figure[1]"), "joint-rate chart");
    // The 3D view is given the room the rest leaves, not a sliver.
    const view = (await page.getByTestId("arm-view").boundingBox())!;
    expect(view.width * view.height, "3D view area [px²]").toBeGreaterThan(350 * 220);
    await keepScreenshot(page, testInfo, "layout-drive-first-screen", "drive-first-screen", { fullPage: false });

    // The other panels and charts sit below and fold to their title, and unfold again.
    for (const [panel, content] of [["stopping", "stopping-state"], ["joint-positions", "joint-positions"], ["chart-sigma", "chart-sigma"]] as const) {
      const wrapper = page.getByTestId(`panel-${panel}`);
      await expect(wrapper).toHaveAttribute("data-collapsed", "false");
      await expect(page.getByTestId(content)).toHaveCount(1);
      await wrapper.getByRole("button", { name: "Collapse" }).click();
      await expect(wrapper).toHaveAttribute("data-collapsed", "true");
      await expect(page.getByTestId(content)).toHaveCount(0);
    }
    await page.getByTestId("panel-stopping").scrollIntoViewIfNeeded();
    await keepScreenshot(page, testInfo, "layout-drive-panels-folded", "drive-panels-folded", { fullPage: false });
    for (const panel of ["stopping", "joint-positions", "chart-sigma"]) {
      await page.getByTestId(`panel-${panel}`).getByRole("button", { name: "Expand" }).click();
      await expect(page.getByTestId(`panel-${panel}`)).toHaveAttribute("data-collapsed", "false");
    }
    await expect(page.getByTestId("stopping-state")).toBeVisible();
    await expect(page.getByTestId("chart-sigma")).not.toHaveAttribute("data-points", "0");
    await page.getByRole("button", { name: "End session" }).click();
  });

  test("the charts label their axes sensibly, draw ε and σ_stop, and tell the six joints apart by colour", async ({ page, setup }, testInfo) => {
    const { operator, profile } = await setup.operatorWithApprovedProfile();
    await signIn(page, "", operator.username, "/drive", operator.password);
    await startDriving(page, profile.name);

    // Idle: the TCP speed axis reads 0 … 10 mm/s, not "0 0 0"; the joint rates ±1 deg/s.
    await expect(page.getByTestId("chart-speed")).not.toHaveAttribute("data-points", "0");
    await expect.poll(() => yTicks(page, "speed")).toEqual(["0", "2.5", "5.0", "7.5", "10.0"]);
    await expect(page.getByTestId("chart-jointRates")).not.toHaveAttribute("data-points", "0");
    const idleRates = await yTicks(page, "jointRates");
    expect(isSensible(idleRates), `idle joint-rate ticks ${idleRates.join(" ")}`).toBe(true);

    // The σ chart's legend and data carry ε (40 mm) and σ_stop (20 mm) of the default profile.
    const sigmaFigure = page.getByTestId("chart-sigma").locator("xpath=ancestor::figure[1]");
    await expect(page.getByTestId("chart-sigma")).toHaveAttribute("data-epsilon-mm", "40");
    await expect(page.getByTestId("chart-sigma")).toHaveAttribute("data-sigma-stop-mm", "20");
    await expect(sigmaFigure.locator(".u-legend")).toContainText("ε 40.0");
    await expect(sigmaFigure.locator(".u-legend")).toContainText("σ_stop 20.0");

    // The six joint series: six different colours (uPlot's legend markers take each series' stroke).
    const jointFigure = page.getByTestId("chart-jointRates").locator("xpath=ancestor::figure[1]");
    const colours = await jointFigure.locator(".u-legend .u-series .u-marker").evaluateAll((markers) =>
      markers.map((m) => getComputedStyle(m).borderTopColor).filter((c) => c !== "rgba(0, 0, 0, 0)" && c !== ""),
    );
    expect(colours, `legend colours ${colours.join(", ")}`).toHaveLength(6);
    expect(new Set(colours).size).toBe(6);

    // Jogging: the joint-rate axis grows to the rates and keeps distinct, non-zero ticks.
    const stick = [0, 0, 0, 0];
    stick[LEFT_STICK_Y] = -0.9;
    await setGamepad(page, { pressed: { [ENABLING_BUTTON]: true }, axes: stick });
    await expect(page.getByTestId("motion-state")).toHaveText("Moving", { useInnerText: true });
    let jogging: string[] = [];
    await expect
      .poll(async () => {
        jogging = await yTicks(page, "jointRates");
        return Math.max(...jogging.map((t) => Math.abs(Number(t))));
      })
      .toBeGreaterThan(1);
    expect(isSensible(jogging), `jogging joint-rate ticks ${jogging.join(" ")}`).toBe(true);
    await keepScreenshot(page, testInfo, "layout-charts-jogging", "charts-jogging", { fullPage: false });
    await setGamepad(page, { pressed: { [ENABLING_BUTTON]: false }, axes: [0, 0, 0, 0] });
    await expect(page.getByTestId("motion-state")).toHaveText(/^Stopped/, { useInnerText: true });
    await page.getByTestId("chart-sigma").scrollIntoViewIfNeeded();
    await keepScreenshot(page, testInfo, "layout-charts-below", "charts-below", { fullPage: false });
    await page.getByRole("button", { name: "End session" }).click();
  });

  test("a replay marks the session's stops on its timeline, plays at a chosen speed and says who drove which version when", async ({ page, setup }, testInfo) => {
    const { operator, profile } = await setup.operatorWithApprovedProfile();
    const states = recordStateFrames(page);
    await signIn(page, "", operator.username, "/drive", operator.password);
    await startDriving(page, profile.name);

    // Jog, release (a controlled stop), then the simulated halt, reset, and wait for 3 s of session time.
    const stick = [0, 0, 0, 0];
    stick[LEFT_STICK_Y] = -0.9;
    await setGamepad(page, { pressed: { [ENABLING_BUTTON]: true }, axes: stick });
    await expect(page.getByTestId("motion-state")).toHaveText("Moving", { useInnerText: true });
    await setGamepad(page, { pressed: { [ENABLING_BUTTON]: false }, axes: [0, 0, 0, 0] });
    await expect(page.getByTestId("motion-state")).toHaveText(/^Stopped/, { useInnerText: true });
    await page.getByRole("button", { name: "STOP", exact: true }).click();
    await expect(page.getByTestId("motion-state")).toHaveText(/Emergency stop latched/, { useInnerText: true });
    await page.getByRole("button", { name: "Reset emergency stop" }).click();
    await expect.poll(() => states.latest()?.t ?? 0).toBeGreaterThan(3);
    await page.getByRole("button", { name: "End session" }).click();
    await page.getByRole("link", { name: "Open its recording" }).click();

    // The title: who drove, which profile version, when.
    const title = page.getByRole("heading", { level: 1 });
    await expect(title).toContainText(operator.displayName);
    await expect(title).toContainText(`${profile.name} v1`);
    const today = new Intl.DateTimeFormat("en-GB", { dateStyle: "medium" }).format(new Date());
    await expect(title).toContainText(today);

    // Markers: the controlled stop (the released enabling control; on a starved machine the watchdog may
    // stop the jog first) and the simulated halt.
    const stops = page.locator("[data-testid=replay-marker][data-kind=stop]");
    const stopNamed = (...kinds: StopKind[]) => new RegExp(`^Stop: (${kinds.map((k) => escapeRegExp(STOP_KIND_LABELS[k])).join("|")}) at \\d+\\.\\d\\d s$`);
    await expect(stops.first()).toHaveAccessibleName(stopNamed("enabling-released", "watchdog"));
    await expect(stops.last()).toHaveAccessibleName(stopNamed("instant-halt"));
    const stopCount = await stops.count();
    expect(stopCount).toBeGreaterThanOrEqual(2);
    await expect(page.getByTestId("replay-marker-legend")).toContainText(`${stopCount} stops`);
    // A marker takes the replay to its moment.
    const replayTime = page.getByTestId("replay-time");
    await stops.last().click();
    await expect(replayTime).not.toHaveText(/^0\.00 /, { useInnerText: true });
    await keepScreenshot(page, testInfo, "layout-replay", "replay", { fullPage: false });

    // Speed: at 4× the first 2 s of the session play in well under 2 s.
    await page.getByRole("slider", { name: "Timeline" }).fill("0");
    await expect(replayTime).toHaveText(/^0\.00 /, { useInnerText: true });
    await page.getByLabel("Playback speed").selectOption("4");
    const started = Date.now();
    await page.getByRole("button", { name: "Play" }).click();
    await page.waitForFunction(() => parseFloat(document.querySelector("[data-testid=replay-time]")!.textContent!) >= 2, undefined, { polling: "raf" });
    const wallS = (Date.now() - started) / 1000;
    expect(wallS, "wall time for 2 s of replay at 4× [s]").toBeLessThan(1.5);
    await page.getByRole("button", { name: "Pause" }).click();
  });
});
