import { expect } from "@playwright/test";
import type { Page } from "playwright-core";

/**
 * Helpers for the drive-page browser tests: a simulated gamepad (navigator.getGamepads stubbed before
 * any page script runs), the state frames the page receives, and an in-page frame-rate measurement.
 */

/** Standard-mapping button count (W3C Gamepad "standard" layout: 17 buttons, 4 axes). */
const STANDARD_BUTTONS = 17;

/**
 * Installs a fake "standard" gamepad on every page of the context. The test changes it with
 * setGamepad(); the page reads it through navigator.getGamepads() like a real pad.
 */
export function fakeGamepadScript(): string {
  return `(() => {
    const state = { axes: [0, 0, 0, 0], pressed: new Array(${STANDARD_BUTTONS}).fill(false), readers: [] };
    window.__jogTestPad = state;
    const snapshot = () => ({
      id: "Jogwright test pad (STANDARD GAMEPAD)",
      index: 0,
      connected: true,
      mapping: "standard",
      timestamp: performance.now(),
      axes: state.axes.slice(),
      buttons: state.pressed.map((p) => ({ pressed: p, touched: p, value: p ? 1 : 0 })),
      vibrationActuator: null,
    });
    Object.defineProperty(Navigator.prototype, "getGamepads", {
      configurable: true,
      value: () => {
        // setGamepad() waits for this: the page has polled the pad since the change.
        const readers = state.readers.splice(0);
        for (const done of readers) queueMicrotask(done);
        return [snapshot(), null, null, null];
      },
    });
  })();`;
}

/** How long setGamepad() waits for the page to poll the pad (its input loop polls every 16 ms). */
const PAD_READ_TIMEOUT_MS = 10_000;

/**
 * Changes the fake pad and waits until the page's input loop has polled it: a browser only learns of a
 * gamepad's state by polling, so a press and release set back to back, between two polls, would never be
 * seen — a real trigger is held longer than one poll. The wait is on the poll itself, never a fixed sleep.
 */
export async function setGamepad(page: Page, update: { axes?: number[]; pressed?: Record<number, boolean> }): Promise<void> {
  await page.evaluate(
    ([u, timeoutMs]) =>
      new Promise<void>((resolve, reject) => {
        const pad = (window as unknown as { __jogTestPad: { axes: number[]; pressed: boolean[]; readers: (() => void)[] } }).__jogTestPad;
        if (u.axes) pad.axes = u.axes.slice();
        for (const [i, p] of Object.entries(u.pressed ?? {})) pad.pressed[Number(i)] = p;
        const timer = setTimeout(() => reject(new Error(`the page did not poll the gamepad within ${timeoutMs} ms`)), timeoutMs);
        pad.readers.push(() => {
          clearTimeout(timer);
          resolve();
        });
      }),
    [update, PAD_READ_TIMEOUT_MS] as const,
  );
}

/** One state frame as the server sent it (the fields the tests read; jogStateSchema in packages/shared). */
export interface StateFrame {
  /** Simulation time since the session started, s. */
  t: number;
  /** TCP pose, 4×4 row-major. */
  pose: number[];
}

/**
 * Records the state frames the page receives on its jog sockets, from now on (call it before the page
 * opens its socket). The tests wait on simulation time with it instead of sleeping.
 */
export function recordStateFrames(page: Page): { frames: StateFrame[]; latest(): StateFrame | undefined; since(t: number): StateFrame[] } {
  const frames: StateFrame[] = [];
  page.on("websocket", (socket) => {
    socket.on("framereceived", ({ payload }) => {
      if (typeof payload !== "string") return;
      const message = JSON.parse(payload) as Partial<StateFrame> & { type?: string };
      if (message.type === "state") frames.push({ t: message.t!, pose: message.pose! });
    });
  });
  return {
    frames,
    latest: () => frames.at(-1),
    since: (t) => frames.filter((f) => f.t >= t),
  };
}

/** Counts requestAnimationFrame callbacks in the page over `durationMs`: frames per second. */
export async function measureFps(page: Page, durationMs: number): Promise<number> {
  return page.evaluate(
    (ms) =>
      new Promise<number>((resolve) => {
        let frames = 0;
        let start = 0;
        const step = (now: number) => {
          if (start === 0) start = now;
          else frames++;
          if (now - start < ms) requestAnimationFrame(step);
          else resolve((frames * 1000) / (now - start));
        };
        requestAnimationFrame(step);
      }),
    durationMs,
  );
}

/** The TCP position shown beside the 3D view, mm. */
export async function readTcpMm(page: Page): Promise<{ x: number; y: number; z: number }> {
  const read = async (axis: string) => Number(await page.getByTestId(`tcp-${axis}`).innerText());
  return { x: await read("x"), y: await read("y"), z: await read("z") };
}

export async function readJointPositions(page: Page): Promise<string[]> {
  return page.getByTestId("joint-positions").locator("[data-testid$='-position']").allInnerTexts();
}

export async function chartPoints(page: Page, key: "jointRates" | "sigma" | "speed"): Promise<number> {
  return Number(await page.getByTestId(`chart-${key}`).getAttribute("data-points"));
}

export async function drawnFrames(page: Page): Promise<number> {
  return Number(await page.getByTestId("arm-view").getAttribute("data-drawn-frames"));
}

/**
 * On the drive page: picks the profile named `profileName` (and the version whose label matches `version`,
 * else the picker's default), starts driving, and waits for the first state frames (the TCP readout shows
 * numbers).
 */
export async function startDriving(page: Page, profileName: string, version?: RegExp): Promise<void> {
  await expect(page.getByRole("heading", { level: 1, name: "Drive" })).toBeVisible();
  const profileSelect = page.getByLabel("Profile", { exact: true });
  await profileSelect.selectOption((await profileSelect.locator("option", { hasText: profileName }).first().getAttribute("value"))!);
  if (version) {
    const versionSelect = page.getByLabel("Version", { exact: true });
    const v = versionSelect.locator("option", { hasText: version }).first();
    await expect(v).toBeAttached();
    await versionSelect.selectOption((await v.getAttribute("value"))!);
  }
  await expect(page.locator("[data-testid=connection-state][data-connection=open]")).toBeVisible();
  await page.getByRole("button", { name: /Start driving/ }).click();
  await expect(page.getByTestId("session-info")).toBeVisible();
  await expect(page.getByTestId("tcp-x")).toHaveText(/^\s*-?\d/);
}
