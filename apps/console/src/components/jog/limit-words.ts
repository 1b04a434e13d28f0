import type { ProfileParams, RecordedFrame, StopReason } from "@jogwright/shared";
import { formatFixed } from "../../lib/format.ts";

// The operator-facing status lines for the controller's binding limit and what the arm is doing (with the
// values in them); the names of closed sets (stop reasons, guard states …) are in @jogwright/shared's labels.ts.

const mmPerS = (mPerS: number) => `${formatFixed(mPerS * 1000, 0)} mm/s`;
const degPerS = (radPerS: number) => `${formatFixed((radPerS * 180) / Math.PI, 0)} deg/s`;

export function bindingInWords(frame: RecordedFrame, params: ProfileParams | null): string {
  const joint = frame.bindingJoint >= 0 ? `Joint ${frame.bindingJoint + 1}` : "A joint";
  switch (frame.binding) {
    case "none":
      return "No limit is holding the motion back";
    case "joint-rate": {
      const cap = params?.jointRateCapsRadPerS[frame.bindingJoint];
      return `${joint} at its rate cap${cap !== undefined ? ` (${degPerS(cap)})` : ""}`;
    }
    case "tcp-linear":
      return `TCP speed cap${params ? ` ${mmPerS(params.tcpLinearCapMPerS)}` : ""}`;
    case "tcp-angular":
      return `TCP turn-rate cap${params ? ` ${degPerS(params.tcpAngularCapRadPerS)}` : ""}`;
    case "joint-limit":
      return `${joint} slowing before its range limit`;
    case "singularity-guard":
      return "Stopped before singularity — acknowledge to continue";
  }
}

export const STOP_REASON_WORDS: Record<StopReason, string> = {
  none: "",
  "enabling-released": "Stopped — enabling control released",
  watchdog: "Stopped — input stream lost (watchdog)",
  "emergency-stop": "Emergency stop latched — reset to continue",
  "singularity-guard": "Stopped before singularity — acknowledge to continue",
  "session-ended": "Stopped — session ended",
  "profile-not-driveable": "Stopped — this profile version may no longer be driven",
};

export type MotionTone = "ok" | "warn" | "stop" | "neutral";

/** One line for "what is the arm doing", and its state colour. */
export function motionInWords(frame: RecordedFrame | null): { text: string; tone: MotionTone } {
  // No live frames: before the first one, and after the session ended (never a motion state then).
  if (!frame) return { text: "No live session", tone: "neutral" };
  if (frame.estopLatched) return { text: STOP_REASON_WORDS["emergency-stop"], tone: "stop" };
  let moving = false;
  for (const v of frame.qdot) if (Math.abs(v) > 1e-4) moving = true;
  if (moving) return { text: frame.enabled ? "Moving" : "Stopping", tone: frame.enabled ? "ok" : "warn" };
  if (frame.stopReason !== "none") {
    return { text: STOP_REASON_WORDS[frame.stopReason], tone: frame.stopReason === "singularity-guard" ? "warn" : "neutral" };
  }
  return { text: frame.enabled ? "Enabled — holding still" : "Stopped — hold the enabling control to jog", tone: frame.enabled ? "ok" : "neutral" };
}
