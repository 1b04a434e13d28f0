import { GUARD_STATE_LABELS, STOP_KIND_LABELS, type RecordedFrame } from "@jogwright/shared";

// The events a replay's timeline marks, read from the recorded frames alone (no summary needed): every
// stop that began, every change of the singularity guard into a held or acknowledged state, and every
// limit that began to hold the motion back. Stops and guard states in the shared labels' words.

export type ReplayMarkerKind = "stop" | "guard" | "binding";

export interface ReplayMarker {
  kind: ReplayMarkerKind;
  /** Index of the frame where it began. */
  index: number;
  /** Simulation time of that frame [s]. */
  t: number;
  /** What happened, in words. */
  label: string;
}

/** The guard states worth a mark: held, backing out, acknowledged (not "clear" or "off"). */
const MARKED_GUARD_STATES: ReadonlySet<RecordedFrame["guardState"]> = new Set(["stopped", "backing-out", "acknowledged"]);

function bindingWords(frame: RecordedFrame): string {
  const joint = frame.bindingJoint >= 0 ? ` J${frame.bindingJoint + 1}` : "";
  switch (frame.binding) {
    case "joint-rate":
      return `Limit: joint rate cap${joint}`;
    case "tcp-linear":
      return "Limit: TCP speed cap";
    case "tcp-angular":
      return "Limit: TCP turn-rate cap";
    case "joint-limit":
      return `Limit: range limit${joint}`;
    case "singularity-guard":
      return "Limit: singularity guard";
    case "none":
      return "";
  }
}

/**
 * The markers of a recording, in time order. A binding limit flickers on and off from frame to frame at a
 * cap's edge, so the same limit starting again within `bindingGapS` of its last frame is the same event
 * (one marker); a different limit or joint is a new one.
 */
export function extractReplayMarkers(frames: readonly RecordedFrame[], bindingGapS = 0.5): ReplayMarker[] {
  const markers: ReplayMarker[] = [];
  let previous: RecordedFrame | null = null;
  let lastBinding: { key: string; lastSeenT: number } | null = null;
  frames.forEach((frame, index) => {
    const isStopStart =
      frame.stopping.isActive && (!previous || !previous.stopping.isActive || previous.stopping.kind !== frame.stopping.kind);
    if (isStopStart) markers.push({ kind: "stop", index, t: frame.t, label: `Stop: ${STOP_KIND_LABELS[frame.stopping.kind]}` });
    if (MARKED_GUARD_STATES.has(frame.guardState) && previous?.guardState !== frame.guardState) {
      markers.push({ kind: "guard", index, t: frame.t, label: `Guard: ${GUARD_STATE_LABELS[frame.guardState]}` });
    }
    if (frame.binding !== "none") {
      const key = `${frame.binding}:${frame.bindingJoint}`;
      const isSameEvent = lastBinding !== null && lastBinding.key === key && frame.t - lastBinding.lastSeenT <= bindingGapS;
      if (!isSameEvent) markers.push({ kind: "binding", index, t: frame.t, label: bindingWords(frame) });
      lastBinding = { key, lastSeenT: frame.t };
    }
    previous = frame;
  });
  return markers;
}

/** The number of markers of each kind (the timeline's legend). */
export function countMarkers(markers: readonly ReplayMarker[]): Record<ReplayMarkerKind, number> {
  const counts: Record<ReplayMarkerKind, number> = { stop: 0, guard: 0, binding: 0 };
  for (const m of markers) counts[m.kind]++;
  return counts;
}
