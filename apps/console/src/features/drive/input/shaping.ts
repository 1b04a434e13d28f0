import { shapeAxis } from "@jogwright/kinematics";
import { TWIST_TARGETS, type GamepadMapping } from "@jogwright/shared";

// Device calibration of a stick value (−1 … 1) uses shapeAxis — deadband with rescaling, then expo — the
// one copy in @jogwright/kinematics that the server's motion gate also uses for the profile's shaping
// (applied on the server on top of this).

export interface GamepadReading {
  /** Index of the gamepad read, or −1 when none is connected. */
  padIndex: number;
  padId: string;
  /** One value per twist component (vx … wz), after mapping, inversion, deadband and expo. */
  axes: Float64Array;
  isEnablingHeld: boolean;
  isEstopPressed: boolean;
}

export function createGamepadReading(): GamepadReading {
  return { padIndex: -1, padId: "", axes: new Float64Array(TWIST_TARGETS.length), isEnablingHeld: false, isEstopPressed: false };
}

function buttonValue(pad: Gamepad, index: number): number {
  const button = pad.buttons[index];
  if (!button) return 0;
  // Analogue buttons (triggers) report a value; some pads report pressed with value 0.
  return button.value > 0 ? button.value : button.pressed ? 1 : 0;
}

/** The first connected gamepad, preferring the browser's "standard" layout. */
export function firstGamepad(): Gamepad | null {
  if (typeof navigator === "undefined" || typeof navigator.getGamepads !== "function") return null;
  let fallback: Gamepad | null = null;
  for (const pad of navigator.getGamepads()) {
    if (!pad || !pad.connected) continue;
    if (pad.mapping === "standard") return pad;
    fallback ??= pad;
  }
  return fallback;
}

/** Reads the gamepad through the user's mapping into `out` (no allocation). */
export function readGamepad(mapping: GamepadMapping, out: GamepadReading): GamepadReading {
  out.axes.fill(0);
  const pad = firstGamepad();
  if (!pad) {
    out.padIndex = -1;
    out.padId = "";
    out.isEnablingHeld = false;
    out.isEstopPressed = false;
    return out;
  }
  out.padIndex = pad.index;
  out.padId = pad.id;
  for (const entry of mapping.axes) {
    const target = TWIST_TARGETS.indexOf(entry.target);
    const source = entry.source;
    let raw =
      source.kind === "axis" ? (pad.axes[source.index] ?? 0) : buttonValue(pad, source.positive) - buttonValue(pad, source.negative);
    if (entry.invert) raw = -raw;
    // Buttons are already clean 0/1 (or analogue triggers); the deadband still removes a resting trigger.
    out.axes[target] = shapeAxis(Math.max(-1, Math.min(1, raw)), mapping.deadband, mapping.expo);
  }
  out.isEnablingHeld = pad.buttons[mapping.enablingButton]?.pressed ?? false;
  out.isEstopPressed = mapping.estopButton !== null && (pad.buttons[mapping.estopButton]?.pressed ?? false);
  return out;
}
