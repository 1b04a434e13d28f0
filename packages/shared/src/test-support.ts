import type { RecordedFrame } from "./jog-protocol.ts";

// For the tests of what reads recorded frames (replay markers, recording exports, the frame trace), in the
// console and the server alike: one frame with nothing to mark, and what each test sets on top. Imported as
// `@jogwright/shared/test-support`, never from the package's index, so no app ships it.

const NO_STOP = { timeS: 0, distanceM: 0 };

/**
 * A six-axis arm at rest at q = 0 (identity pose, σ_min 0.18 m), the enabling control released, nothing
 * binding, the guard clear, no stop active or predicted; `patch` replaces whole fields.
 */
export function frameAtRest(patch: Partial<RecordedFrame> = {}): RecordedFrame {
  return {
    t: 0,
    q: [0, 0, 0, 0, 0, 0],
    qdot: [0, 0, 0, 0, 0, 0],
    pose: [1, 0, 0, 0, 0, 1, 0, 0, 0, 0, 1, 0, 0, 0, 0, 1],
    twistCommanded: [0, 0, 0, 0, 0, 0],
    twistAchieved: [0, 0, 0, 0, 0, 0],
    sigmaMin: 0.18,
    manipulability: 0.04,
    lambda: 0,
    scales: { jointRate: 1, tcpLinear: 1, tcpAngular: 1, jointLimit: 1 },
    binding: "none",
    bindingJoint: -1,
    guardState: "clear",
    enabled: false,
    estopLatched: false,
    stopReason: "none",
    overridePercent: 50,
    warnings: [],
    stopping: { kind: "enabling-released", isActive: false, ...NO_STOP },
    stopPredictions: { "enabling-released": NO_STOP, watchdog: NO_STOP, "singularity-guard": NO_STOP, "instant-halt": NO_STOP },
    jointAccelPeak: [],
    ...patch,
  };
}
