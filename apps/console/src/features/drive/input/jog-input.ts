import { useSyncExternalStore } from "react";
import { DEFAULT_GAMEPAD_MAPPING, TWIST_TARGETS, type GamepadMapping } from "@jogwright/shared";
import { jogClient } from "../../../lib/jog-socket.ts";
import { SnapshotStore } from "../../../lib/snapshot-store.ts";
import { createGamepadReading, readGamepad } from "./shaping.ts";

/**
 * The input loop of the drive page. Every 16 ms it merges the gamepad (through the user's mapping), the
 * on-screen press-and-hold controls, the on-screen sliders and the keyboard into one input frame and
 * sends it through the jog client while anything is held; with the enabling control held it sends every
 * tick, well inside the server's watchdog (≥ one frame per 50 ms). Releasing the enabling control sends
 * `enabling: false` at once, not at the next tick. Losing focus or hiding the page releases everything.
 * After a gamepad appears or reappears, and after the window regains focus, an enabling control counts only
 * once it has been seen released (PRODUCT.md step 2): a trigger or a Shift key still held then is ignored
 * until it is let go and pressed again, and the server is told (`device-changed`) so it holds to that too.
 *
 * Keyboard: Shift is the enabling key (hold to run); W/S ±x, A/D ±y, R/F ±z, I/K ±rx, J/L ±ry, U/O ±rz
 * (in joint mode the same keys drive joints 1–6). Keys typed into a form field are ignored.
 */

export type JogMode = "cartesian" | "joint";
export type JogFrame = "world" | "tool";

const MAX_AXES = 12;
const TICK_MS = 16;

/** Physical key (KeyboardEvent.code) → [axis index, direction]. */
export const KEY_AXES: Readonly<Record<string, readonly [number, 1 | -1]>> = {
  KeyW: [0, 1], KeyS: [0, -1],
  KeyA: [1, 1], KeyD: [1, -1],
  KeyR: [2, 1], KeyF: [2, -1],
  KeyI: [3, 1], KeyK: [3, -1],
  KeyJ: [4, 1], KeyL: [4, -1],
  KeyU: [5, 1], KeyO: [5, -1],
};
const ENABLING_KEYS = new Set(["ShiftLeft", "ShiftRight"]);

export interface JogInputSnapshot {
  isEnabling: boolean;
  /** Which enabling sources are held: "screen", "keyboard", "gamepad". */
  enablingSources: readonly string[];
  gamepadId: string | null;
  mode: JogMode;
  frame: JogFrame;
  overridePercent: number;
  maxOverridePercent: number;
  /** The axis values last sent, −1 … 1 (for the on-screen indicators). */
  axes: readonly number[];
  isActive: boolean;
}

function isEditable(target: EventTarget | null): boolean {
  if (!(target instanceof HTMLElement)) return false;
  if (target.isContentEditable) return true;
  const tag = target.tagName;
  if (tag === "TEXTAREA" || tag === "SELECT") return true;
  if (tag === "INPUT") {
    const type = (target as HTMLInputElement).type;
    return type !== "range" && type !== "checkbox" && type !== "radio" && type !== "button";
  }
  return false;
}

const INITIAL: JogInputSnapshot = {
  isEnabling: false,
  enablingSources: [],
  gamepadId: null,
  mode: "cartesian",
  frame: "world",
  overridePercent: 50,
  maxOverridePercent: 100,
  axes: new Array<number>(6).fill(0),
  isActive: false,
};

export class JogInputController extends SnapshotStore<JogInputSnapshot> {
  private mapping: GamepadMapping = DEFAULT_GAMEPAD_MAPPING;
  private axisCount = 6;
  private enablingSources = new Set<string>();
  /** On-screen holds: hold id → [axis, direction]. */
  private holds = new Map<string, readonly [number, 1 | -1]>();
  private sliders = new Float64Array(MAX_AXES);
  private keysDown = new Set<string>();
  private gamepad = createGamepadReading();
  /** Set when a device (re)appears or focus returns; cleared once the pad's enabling trigger reads released. */
  private isPadReleaseNeeded = true;
  /**
   * Set when the window loses or regains focus; cleared by any key or pointer event that shows Shift up.
   * A browser may report a key held since before the focus returned as a fresh (non-repeat) keydown.
   */
  private isKeyReleaseNeeded = false;
  private wasEstopPressed = false;
  private timer: ReturnType<typeof setInterval> | null = null;
  /** Aborted to remove the keyboard, focus and gamepad listeners that start() added. */
  private pageEvents: AbortController | null = null;
  private wasActive = false;
  private isReadOnly = true;
  private axes = new Array<number>(6).fill(0);

  constructor() {
    super(INITIAL);
  }

  /** Starts the loop and the keyboard/focus listeners. Call stop() when the page goes. */
  start(): void {
    if (this.timer) return;
    this.timer = setInterval(() => this.tick(), TICK_MS);
    // One signal removes them all in stop(), so the two lists cannot drift apart.
    this.pageEvents = new AbortController();
    const { signal } = this.pageEvents;
    window.addEventListener("keydown", this.onKeyDown, { signal });
    window.addEventListener("keyup", this.onKeyUp, { signal });
    window.addEventListener("blur", this.onBlur, { signal });
    window.addEventListener("focus", this.onFocus, { signal });
    window.addEventListener("pointerdown", this.onPointerDown, { capture: true, signal });
    window.addEventListener("gamepadconnected", this.onGamepadEvent, { signal });
    window.addEventListener("gamepaddisconnected", this.onGamepadEvent, { signal });
    document.addEventListener("visibilitychange", this.onVisibility, { signal });
  }

  private readonly onBlur = (): void => {
    this.isKeyReleaseNeeded = true;
    this.releaseAll();
  };

  /**
   * The window regained focus: blur already released everything (and told the server). The gamepad's
   * trigger and the Shift key must each be seen released before they count again, here and on the server.
   */
  private readonly onFocus = (): void => {
    this.isKeyReleaseNeeded = true;
    this.noteDeviceChanged();
  };

  /** A pointer press with Shift up shows the enabling key released. */
  private readonly onPointerDown = (event: PointerEvent): void => {
    if (!event.shiftKey) this.isKeyReleaseNeeded = false;
  };

  /** The browser saw a pad connect or disconnect, possibly between two polls of the loop. */
  private readonly onGamepadEvent = (): void => this.noteDeviceChanged();

  /**
   * A gamepad appeared, reappeared or was swapped, or the focus returned: its trigger counts only after it
   * reads released, and the server makes a controlled stop and counts the enabling control only after it
   * has seen it released (device-changed). The next tick sends the input as it now is (released unless a
   * fresh press counts), so the server sees that release without waiting for another change.
   */
  private noteDeviceChanged(): void {
    this.isPadReleaseNeeded = true;
    if (this.enablingSources.delete("gamepad")) this.publishEnabling();
    if (!this.isReadOnly && jogClient.command("device-changed")) this.wasActive = true;
  }

  stop(): void {
    this.releaseAll();
    if (this.timer) clearInterval(this.timer);
    this.timer = null;
    this.pageEvents?.abort();
    this.pageEvents = null;
  }

  /** Read-only (watching, no session, e-stop pending) sends nothing. */
  configure(options: {
    axisCount?: number;
    isReadOnly?: boolean;
    overridePercent?: number;
    maxOverridePercent?: number;
    mapping?: GamepadMapping;
  }): void {
    if (options.mapping) this.mapping = options.mapping;
    if (options.axisCount !== undefined && options.axisCount !== this.axisCount) {
      this.axisCount = Math.min(MAX_AXES, options.axisCount);
      this.sliders.fill(0);
    }
    if (options.isReadOnly !== undefined) {
      this.isReadOnly = options.isReadOnly;
      if (options.isReadOnly) this.releaseAll();
    }
    const patch: Partial<JogInputSnapshot> = {};
    if (options.maxOverridePercent !== undefined) patch.maxOverridePercent = options.maxOverridePercent;
    if (options.overridePercent !== undefined) patch.overridePercent = options.overridePercent;
    if (Object.keys(patch).length > 0) this.publish(patch);
  }

  setMode(mode: JogMode): void {
    this.releaseAll();
    this.publish({ mode });
  }

  setFrame(frame: JogFrame): void {
    this.publish({ frame });
  }

  setOverride(percent: number): void {
    this.publish({ overridePercent: Math.max(0, Math.min(this.snapshot.maxOverridePercent, percent)) });
  }

  pressEnabling(source: string): void {
    if (this.isReadOnly) return;
    this.enablingSources.add(source);
    this.publishEnabling();
    this.tick();
  }

  releaseEnabling(source: string): void {
    if (!this.enablingSources.delete(source)) return;
    this.publishEnabling();
    // Hold-to-run: the release goes out now, not at the next tick.
    this.tick();
  }

  pressAxis(holdId: string, axis: number, direction: 1 | -1): void {
    if (this.isReadOnly) return;
    this.holds.set(holdId, [axis, direction]);
    this.tick();
  }

  releaseAxis(holdId: string): void {
    if (this.holds.delete(holdId)) this.tick();
  }

  /** A spring-back slider: value −1 … 1; set 0 on release. */
  setSlider(axis: number, value: number): void {
    if (this.isReadOnly) return;
    this.sliders[axis] = Math.max(-1, Math.min(1, value));
    this.tick();
  }

  releaseAll = (): void => {
    const hadAnything = this.enablingSources.size > 0 || this.holds.size > 0 || this.keysDown.size > 0 || this.sliders.some((v) => v !== 0);
    this.enablingSources.clear();
    this.holds.clear();
    this.keysDown.clear();
    this.sliders.fill(0);
    if (hadAnything) {
      this.publishEnabling();
      this.tick();
    }
  };

  private onVisibility = (): void => {
    if (document.visibilityState !== "visible") this.releaseAll();
  };

  private onKeyDown = (event: KeyboardEvent): void => {
    if (!event.shiftKey) this.isKeyReleaseNeeded = false;
    if (this.isReadOnly || isEditable(event.target) || event.metaKey || event.ctrlKey || event.altKey) return;
    if (ENABLING_KEYS.has(event.code)) {
      // A repeat, or a key held since before the focus returned, is not a fresh press.
      if (!event.repeat && !this.isKeyReleaseNeeded) this.pressEnabling("keyboard");
      return;
    }
    if (KEY_AXES[event.code]) {
      event.preventDefault();
      if (!this.keysDown.has(event.code)) {
        this.keysDown.add(event.code);
        this.tick();
      }
    }
  };

  private onKeyUp = (event: KeyboardEvent): void => {
    if (!event.shiftKey) this.isKeyReleaseNeeded = false;
    if (ENABLING_KEYS.has(event.code)) {
      // Both Shift keys count as one enabling key; release only when neither is down.
      if (!event.shiftKey) this.releaseEnabling("keyboard");
      return;
    }
    if (this.keysDown.delete(event.code)) this.tick();
  };

  private publishEnabling(): void {
    this.publish({ isEnabling: this.enablingSources.size > 0, enablingSources: [...this.enablingSources] });
  }

  /**
   * Tells a new session, with one released input frame, that the enabling control is not held — only
   * when that is true (a gamepad trigger already held must still be released and pressed again).
   */
  announceReleased(): void {
    if (this.isReadOnly || this.enablingSources.size > 0) return;
    if (readGamepad(this.mapping, this.gamepad).isEnablingHeld) return;
    const n = this.snapshot.mode === "cartesian" ? 6 : this.axisCount;
    jogClient.sendInput({
      clientTimeMs: performance.now(),
      enabling: false,
      mode: this.snapshot.mode,
      frame: this.snapshot.frame,
      axes: new Array<number>(n).fill(0),
      overridePercent: this.snapshot.overridePercent,
    });
  }

  /** Samples every input and sends one frame when anything is held (or was until now). */
  tick(): void {
    const reading = readGamepad(this.mapping, this.gamepad);
    const gamepadId = reading.padIndex >= 0 ? reading.padId : null;
    if (gamepadId !== this.snapshot.gamepadId) {
      // A pad appeared, reappeared or was swapped: its enabling trigger counts only after it has been seen
      // released (PRODUCT.md step 2), here and on the server (device-changed → a controlled stop there).
      if (gamepadId !== null) this.noteDeviceChanged();
      this.publish({ gamepadId });
    }
    if (this.isPadReleaseNeeded && !reading.isEnablingHeld) this.isPadReleaseNeeded = false;

    if (reading.isEstopPressed && !this.wasEstopPressed) {
      // Only the driver's page sends it: a watcher's gamepad must not reach someone else's session.
      if (!this.isReadOnly) {
        this.releaseAll();
        jogClient.command("estop");
      }
    }
    this.wasEstopPressed = reading.isEstopPressed;

    if (!this.isReadOnly) {
      const hadPad = this.enablingSources.has("gamepad");
      const isPadEnabling = reading.isEnablingHeld && !this.isPadReleaseNeeded;
      if (isPadEnabling !== hadPad) {
        if (isPadEnabling) this.enablingSources.add("gamepad");
        else this.enablingSources.delete("gamepad");
        this.publishEnabling();
      }
    }

    const n = this.snapshot.mode === "cartesian" ? 6 : this.axisCount;
    if (this.axes.length !== n) this.axes = new Array<number>(n).fill(0);
    const axes = this.axes;
    let anyAxis = false;
    for (let i = 0; i < n; i++) {
      let v = this.sliders[i] ?? 0;
      if (i < 6) v += reading.axes[i]!;
      axes[i] = v;
    }
    for (const [axis, direction] of this.holds.values()) if (axis < n) axes[axis]! += direction;
    for (const code of this.keysDown) {
      const entry = KEY_AXES[code];
      if (entry && entry[0] < n) axes[entry[0]]! += entry[1];
    }
    for (let i = 0; i < n; i++) {
      axes[i] = Math.max(-1, Math.min(1, axes[i]!));
      if (axes[i] !== 0) anyAxis = true;
    }
    const isEnabling = this.enablingSources.size > 0 && !this.isReadOnly;
    const isActive = isEnabling || anyAxis;

    if (isActive || this.wasActive) {
      jogClient.sendInput({
        clientTimeMs: performance.now(),
        enabling: isEnabling,
        mode: this.snapshot.mode,
        frame: this.snapshot.frame,
        axes: axes.slice(),
        overridePercent: this.snapshot.overridePercent,
      });
    }
    if (isActive !== this.wasActive || axesChanged(this.snapshot.axes, axes)) {
      this.publish({ isActive, axes: axes.slice() });
    }
    this.wasActive = isActive;
  }
}

function axesChanged(a: readonly number[], b: readonly number[]): boolean {
  if (a.length !== b.length) return true;
  for (let i = 0; i < a.length; i++) if (Math.abs(a[i]! - b[i]!) > 0.02) return true;
  return false;
}

/** The drive page's one input controller. */
export const jogInput = new JogInputController();

export function useJogInput(): JogInputSnapshot {
  return useSyncExternalStore(jogInput.subscribe, jogInput.getSnapshot);
}

export { TWIST_TARGETS };
