import type { Page } from "@playwright/test";
import type { ProfileParams } from "@jogwright/shared";
import { keepScreenshot, signIn } from "../support/browser.ts";
import { fakeGamepadScript, recordStateFrames, setGamepad, startDriving } from "../support/drive.ts";
import { expect, test, uniqueTag, type Person, type ProfileRef, type Setup } from "../support/fixtures.ts";

// The drive session's edges (issue 13, items 1, 2, 6, 7, 9): what the drive page does when an input device
// drops out and returns, when the window regains focus with a key held, when the server ends the session
// (deactivation, sign-out, a ceiling change), with `?version=` in the address, and at the stop-before
// guard. Each test makes its own people and profiles through the API and waits on what it expects — the
// simulation time of the state frames the page receives, never a fixed sleep — and keeps a screenshot of
// the state it ends in with JOGWRIGHT_SCREENSHOTS=1 (tests/artifacts/drive-session-*.png, also attached to the report).

// Standard mapping as in DEFAULT_GAMEPAD_MAPPING: left stick y (axis 1, inverted) → vx, button 7 (right
// trigger) is the enabling control.
const LEFT_STICK_Y = 1;
const ENABLING_BUTTON = 7;
const FORWARD = [0, 0, 0, 0].map((v, i) => (i === LEFT_STICK_Y ? -0.9 : v));

test.use({ viewport: { width: 1400, height: 1000 } });

/**
 * The fake pad of tests/support/drive.ts, which can also drop out: with `__jogTestPadConnected = false`
 * navigator.getGamepads() lists no pad, as a browser does while a pad is unplugged.
 */
const PAD_DROPOUT_SCRIPT = `(() => {
  const listed = Navigator.prototype.getGamepads;
  window.__jogTestPadConnected = true;
  Object.defineProperty(Navigator.prototype, "getGamepads", {
    configurable: true,
    value: function () {
      const pads = listed.call(this); // a poll all the same, which setGamepad() waits for
      return window.__jogTestPadConnected ? pads : [null, null, null, null];
    },
  });
})();`;

test.beforeEach(async ({ context }) => {
  await context.addInitScript(fakeGamepadScript());
  await context.addInitScript(PAD_DROPOUT_SCRIPT);
});

/**
 * As setup.operatorWithApprovedProfile, with room for the submission's built-in trial runs (evidence,
 * run in the server's trial pool) on a busy machine, where they can take longer than an action's 15 s.
 */
async function operatorWithApprovedProfile(setup: Setup): Promise<{ operator: Person; profile: ProfileRef }> {
  const operator = await setup.person(["operator"]);
  const profile = await setup.profile({ name: `E2E drive ${uniqueTag()}`, operator, arm: await setup.arm(6), note: "defaults" });
  const version = profile.latestVersion;
  const submitted = await (await setup.as("emeka")).post(`/api/versions/${version.id}/submit`, { timeout: 90_000 });
  expect(submitted.status(), await submitted.text()).toBe(200);
  await setup.approve(version);
  return { operator, profile };
}

/**
 * An engineer's draft to test-drive (the same input path as an operator's, with no review first), with a
 * 1.5 s watchdog: these tests are about the enabling control, and on a busy 2-core machine the page's
 * 16 ms input loop can stall past the default 200 ms and trip the watchdog (DEVELOPERS.md, browser tests).
 */
async function engineerDraft(setup: Setup, label: string, over: Partial<ProfileParams> = {}): Promise<{ engineer: Person; profile: ProfileRef }> {
  const engineer = await setup.person(["engineer"]);
  const operator = await setup.person(["operator"]);
  const arm = await setup.arm(6);
  const params: ProfileParams = { ...setup.defaults(arm), watchdogMs: 1500, ...over };
  const profile = await setup.profile({ name: `E2E ${label} ${uniqueTag()}`, operator, arm, engineer, params, note: "draft" });
  return { engineer, profile };
}

async function setPadConnected(page: Page, isConnected: boolean): Promise<void> {
  await page.evaluate((c) => ((window as unknown as { __jogTestPadConnected: boolean }).__jogTestPadConnected = c), isConnected);
}


const motion = (page: Page) => page.getByTestId("motion-state");

/**
 * Waits until the arm has come to rest (two frames in a row with the same pose: a stop under way, such as
 * the guard's controlled stop, may still be finishing its ramp — CI once caught one 16 µm from its end),
 * then for `simSeconds` of simulation time in the frames the page receives from then on, and checks the
 * TCP did not move in them (the arm stands still; derived: a held arm's pose is exactly constant). An arm
 * that creeps never shows two equal frames, and fails here.
 */
async function expectStandsStill(states: ReturnType<typeof recordStateFrames>, simSeconds = 0.5): Promise<void> {
  const isAtRest = () => {
    const [a, b] = states.frames.slice(-2);
    return a !== undefined && b !== undefined && b.t > a.t && [3, 7, 11].every((i) => a.pose[i] === b.pose[i]);
  };
  await expect.poll(isAtRest).toBe(true);
  const from = states.latest()!;
  await expect.poll(() => states.latest()!.t - from.t).toBeGreaterThan(simSeconds);
  const drift = Math.max(...states.since(from.t).flatMap((f) => [3, 7, 11].map((i) => Math.abs(f.pose[i]! - from.pose[i]!))));
  expect(drift, "TCP movement while it should stand still [m]").toBeLessThan(1e-6);
}

test.describe("drive session", () => {
  test("a gamepad that drops out and returns with the trigger held does not move the arm until the trigger is released and pressed again", async ({ page, setup }, testInfo) => {
    const { engineer, profile } = await engineerDraft(setup, "pad");
    const states = recordStateFrames(page);
    await signIn(page, "", engineer.username, "/drive", engineer.password);
    await startDriving(page, profile.name);
    await setGamepad(page, { pressed: { [ENABLING_BUTTON]: true }, axes: FORWARD });
    await expect(motion(page)).toHaveText("Moving", { useInnerText: true });

    // Unplugged: the pad's trigger is gone, so the arm makes a controlled stop.
    await setPadConnected(page, false);
    await expect(page.getByTestId("gamepad-status")).toContainText("No gamepad");
    await expect(motion(page)).toHaveText(/^Stopped/, { useInnerText: true });
    // Plugged back in with the trigger and the stick still held: nothing moves.
    await setPadConnected(page, true);
    await expect(page.getByTestId("gamepad-status")).toContainText("Jogwright test pad");
    await expectStandsStill(states);
    await expect(motion(page)).not.toHaveText("Moving", { useInnerText: true });
    await expect(page.getByTestId("enabling-control")).toHaveAttribute("aria-pressed", "false");

    // The browser reports the pad (re)connected between two polls of the page's input loop, the trigger
    // held all along: the arm stops and stays stopped too.
    await setGamepad(page, { pressed: { [ENABLING_BUTTON]: false } });
    await setGamepad(page, { pressed: { [ENABLING_BUTTON]: true } });
    await expect(motion(page)).toHaveText("Moving", { useInnerText: true });
    await page.evaluate(() => window.dispatchEvent(new Event("gamepadconnected")));
    await expect(motion(page)).toHaveText(/^Stopped/, { useInnerText: true });
    await expectStandsStill(states);

    // A fresh release and press moves it again.
    await setGamepad(page, { pressed: { [ENABLING_BUTTON]: false } });
    await expect(page.getByTestId("enabling-control")).toHaveAttribute("aria-pressed", "false");
    await setGamepad(page, { pressed: { [ENABLING_BUTTON]: true } });
    await expect(motion(page)).toHaveText("Moving", { useInnerText: true });
    await keepScreenshot(page, testInfo, "drive-session-gamepad-returned", "gamepad-returned");
    await setGamepad(page, { pressed: { [ENABLING_BUTTON]: false }, axes: [0, 0, 0, 0] });
  });

  test("a window that regains focus with the enabling key still held does not move the arm until the key is released and pressed again", async ({ page, setup }, testInfo) => {
    const { engineer, profile } = await engineerDraft(setup, "focus");
    const states = recordStateFrames(page);
    await signIn(page, "", engineer.username, "/drive", engineer.password);
    await startDriving(page, profile.name);
    await page.keyboard.down("Shift");
    await page.keyboard.down("KeyW");
    await expect(motion(page)).toHaveText("Moving", { useInnerText: true });

    // The window loses focus (everything is released) and gets it back with Shift and W still down. A
    // browser may report such a key as a fresh keydown (not a repeat): that must not count as a press.
    await page.evaluate(() => window.dispatchEvent(new Event("blur")));
    await expect(motion(page)).toHaveText(/^Stopped/, { useInnerText: true });
    await page.evaluate(() => {
      window.dispatchEvent(new Event("focus"));
      for (const [code, key] of [["ShiftLeft", "Shift"], ["KeyW", "W"]]) {
        window.dispatchEvent(new KeyboardEvent("keydown", { code, key, shiftKey: true, repeat: false, bubbles: true }));
      }
    });
    await expectStandsStill(states);
    await expect(page.getByTestId("enabling-control")).toHaveAttribute("aria-pressed", "false");

    // Released and pressed again: it moves.
    await page.keyboard.up("Shift");
    await page.keyboard.down("Shift");
    await expect(motion(page)).toHaveText("Moving", { useInnerText: true });
    await keepScreenshot(page, testInfo, "drive-session-focus-returned", "focus-returned");
    await page.keyboard.up("KeyW");
    await page.keyboard.up("Shift");
  });

  test("an operator deactivated while driving reads why, sees no motion state, and the page stops reconnecting", async ({ page, setup }, testInfo) => {
    const { operator, profile } = await operatorWithApprovedProfile(setup);
    let sockets = 0;
    page.on("websocket", () => sockets++);
    await signIn(page, "", operator.username, "/drive", operator.password);
    await startDriving(page, profile.name);
    await page.keyboard.down("Shift");
    await page.keyboard.down("KeyW");
    await expect(motion(page)).toHaveText("Moving", { useInnerText: true });

    const admin = await setup.as("adele");
    const answer = await admin.patch(`/api/users/${operator.id}`, { data: { isActive: false } });
    expect(answer.status()).toBe(200);

    await expect(page.getByTestId("session-ended")).toHaveText(/deactivated your account/);
    await expect(page.getByTestId("jog-error")).toHaveAttribute("data-code", "account_deactivated");
    await expect(page.getByText("Account deactivated", { exact: true })).toBeVisible();
    // Closed for good: not "Reconnecting…", and no motion state without live frames.
    await expect(page.locator("[data-testid=connection-state]")).toHaveAttribute("data-connection", "closed");
    await expect(motion(page)).not.toHaveText(/Moving|Stopping|latched/, { useInnerText: true });
    await expect(page.getByTestId("tcp-x")).toHaveText("—");
    // STOP is plainly not needed: nothing runs.
    await expect(page.getByTestId("stop-not-needed")).toBeVisible();
    await expect(page.getByRole("button", { name: "Reset emergency stop" })).toHaveCount(0);
    // The words, never the codes.
    await expect(page.locator("main")).not.toContainText(/account-deactivated|account_deactivated|\(signed_out\)/);
    await keepScreenshot(page, testInfo, "drive-session-deactivated", "deactivated");
    await page.keyboard.up("KeyW");
    await page.keyboard.up("Shift");
    // The page opened one socket and, closed with "will not come back" (4403), no other since.
    expect(sockets).toBe(1);
    await expect(page.locator("[data-testid=connection-state]")).toHaveAttribute("data-connection", "closed");
  });

  test("a driver signed out while driving is sent to the sign-in page, and back to Drive after signing in", async ({ page, setup, baseURL }, testInfo) => {
    const { operator, profile } = await operatorWithApprovedProfile(setup);
    await signIn(page, "", operator.username, "/drive", operator.password);
    await startDriving(page, profile.name);
    // This very sign-in ends (as from another tab): the server ends the session and closes with 4401.
    const answer = await page.request.post("/api/auth/sign-out", { headers: { Origin: new URL(baseURL!).origin } });
    expect(answer.ok()).toBe(true);
    await page.waitForURL(/\/sign-in\?next=%2Fdrive/);
    await keepScreenshot(page, testInfo, "drive-session-signed-out", "signed-out");
    await page.getByLabel("User name").fill(operator.username);
    await page.getByLabel("Password").fill(operator.password);
    await page.getByRole("button", { name: "Sign in" }).click();
    await expect(page.getByRole("heading", { level: 1, name: "Drive" })).toBeVisible();
    await expect(page.locator("[data-testid=connection-state][data-connection=open]")).toBeVisible();
  });

  test("?version= preselects a version the person may drive, says in words why not for one they may not, and Switch is off for the version driven", async ({ page, setup }, testInfo) => {
    const { operator, profile } = await operatorWithApprovedProfile(setup);
    const approved = profile.latestVersion;
    const draft = await setup.saveVersion(profile.id, approved, setup.defaults(await setup.arm(6)), "a later draft");
    await signIn(page, "", operator.username, `/drive?version=${approved.id}`, operator.password);
    await expect(page.getByLabel("Profile", { exact: true })).toHaveValue(String(profile.id));
    await expect(page.getByLabel("Version", { exact: true })).toHaveValue(String(approved.id));
    await expect(page.locator("[data-testid=connection-state][data-connection=open]")).toBeVisible();
    await page.getByRole("button", { name: "Start driving" }).click();
    await expect(page.getByTestId("session-info")).toContainText(profile.name);
    await expect(page.getByRole("button", { name: "Switch to this version" })).toBeDisabled();
    await expect(page.getByText("You are driving this version.")).toBeVisible();
    await keepScreenshot(page, testInfo, "drive-session-address-version", "address-version");

    await page.goto(`/drive?version=${draft.id}`);
    await expect(page.getByTestId("address-version-refusal")).toHaveText(/is a draft; operators drive only the current approved version/);
    await page.goto("/drive?version=not-a-number");
    await expect(page.getByTestId("address-version-refusal")).toHaveText(/not a version number/);
    await keepScreenshot(page, testInfo, "drive-session-address-version-refused", "address-version-refused");
  });

  test("at the stop-before guard, Acknowledge stays visible after the push stops and the enabling control is released, until it is given", async ({ page, setup }, testInfo) => {
    // σ_min of the six-axis arm at its ready pose is 0.182 m, and a push along −x lowers it fastest
    // (derived numerically with the kinematics package: dσ/dx ≈ 0.36). A guard threshold of 0.17 m is
    // reached within a fraction of a second.
    const { engineer, profile } = await engineerDraft(setup, "guard", {
      damping: { kind: "singular-value", epsilonM: 0.2, lambdaMaxM: 0.04 },
      guard: { policy: "stop-before", sigmaStopM: 0.17 },
    });
    const states = recordStateFrames(page);
    await signIn(page, "", engineer.username, "/drive", engineer.password);
    await startDriving(page, profile.name);

    const acknowledge = page.getByRole("button", { name: /^Acknowledge/ });
    const guard = page.getByTestId("guard-state");
    await page.keyboard.down("Shift");
    await page.keyboard.down("KeyS");
    await expect(acknowledge).toBeVisible();
    await expect(guard).toHaveAttribute("data-state", "stopped");
    // The indicator agrees with the guard row.
    await expect(page.getByTestId("singularity-state")).toHaveText(/Held at the guard/);

    // The push stops (the enabling control still held): the acknowledgement is still owed.
    await page.keyboard.up("KeyS");
    await expectStandsStill(states);
    await expect(acknowledge).toBeVisible();
    await expect(guard).toHaveAttribute("data-state", "stopped");
    // The enabling control is released too: still owed.
    await page.keyboard.up("Shift");
    await expectStandsStill(states);
    await expect(acknowledge).toBeVisible();
    await expect(page.getByTestId("singularity-state")).toHaveText(/Held at the guard/);
    await keepScreenshot(page, testInfo, "drive-session-guard-held", "guard-held");

    // Given: the button goes, and the arm may pass through, damped.
    await acknowledge.click();
    await page.keyboard.down("Shift");
    await page.keyboard.down("KeyS");
    await expect(guard).toHaveAttribute("data-state", "acknowledged");
    await expect(acknowledge).toHaveCount(0);
    await page.keyboard.up("KeyS");
    await page.keyboard.up("Shift");
  });

  test("a session ended by a ceiling change leaves no emergency-stop latch or Reset on screen, and says why in words", async ({ page, setup }, testInfo) => {
    const { operator, profile } = await operatorWithApprovedProfile(setup);
    await signIn(page, "", operator.username, "/drive", operator.password);
    await startDriving(page, profile.name);
    const officer = await setup.as("sigrid");
    const before = (await (await officer.get("/api/ceilings")).json()) as { revision: number; ceilings: Record<string, number> };
    try {
      // The default profile runs at 250 mm/s; a 200 mm/s ceiling flags its approved version.
      const lowered = await officer.put("/api/ceilings", {
        data: { revision: before.revision, ceilings: { ...before.ceilings, tcpLinearMaxMPerS: 0.2 }, note: "browser test: lowered" },
      });
      expect(lowered.status()).toBe(200);
      // The change reaches the driving socket at once (not at its periodic 10-s re-check): the session ends.
      await expect(page.getByTestId("session-ended")).toHaveAttribute("data-reason", "profile-not-driveable");
      await expect(page.getByTestId("session-ended")).toHaveText(/may no longer be driven/);
      await expect(motion(page)).not.toHaveText(/latched|Moving/, { useInnerText: true });
      await expect(page.getByRole("button", { name: "Reset emergency stop" })).toHaveCount(0);
      await expect(page.getByTestId("stop-not-needed")).toBeVisible();
      await expect(page.locator("main")).not.toContainText("profile-not-driveable");
      await keepScreenshot(page, testInfo, "drive-session-ceiling-ended", "ceiling-ended");
    } finally {
      const now = (await (await officer.get("/api/ceilings")).json()) as { revision: number };
      const restored = await officer.put("/api/ceilings", { data: { revision: now.revision, ceilings: before.ceilings, note: "browser test: restored" } });
      expect(restored.status()).toBe(200);
    }
  });
});
