import { forwardPose } from "@jogwright/kinematics";
import type { Arm, DisplaySeries, RecordedFrame, TrialRun } from "@jogwright/shared";

const NO_STOP = { timeS: 0, distanceM: 0 };

/**
 * A run's display series as frames for the drive workspace's replay (3D view, panels, charts): joint
 * state, twists, σ_min and λ as recorded; the TCP pose from the joint positions (forward kinematics, as the
 * 3D view draws it); the predicted stop from the series; enabled until the release, then the final stop.
 * The run records no scale factors or warnings: those panels show none.
 */
export function framesOfRun(arm: Arm, run: TrialRun, s: DisplaySeries): RecordedFrame[] {
  const frames: RecordedFrame[] = [];
  const releaseAt = s.t[Math.min(s.count - 1, Math.floor(s.releaseIndex / s.every))] ?? Infinity;
  for (let k = 0; k < s.count; k++) {
    const q = s.q[k]!;
    const enabled = s.t[k]! < releaseAt;
    const stopDistance = s.stopDistance[k]!;
    frames.push({
      t: s.t[k]!,
      q,
      qdot: s.qdot[k]!,
      pose: Array.from(forwardPose(arm.model, q)),
      twistCommanded: s.commanded[k]!,
      twistAchieved: s.achieved[k]!,
      sigmaMin: s.sigmaMin[k]!,
      manipulability: 0,
      lambda: s.lambda[k]!,
      scales: { jointRate: 1, tcpLinear: 1, tcpAngular: 1, jointLimit: 1 },
      binding: s.capBound[k] ? "joint-rate" : "none",
      bindingJoint: -1,
      guardState: s.guardHeld[k] ? "stopped" : "clear",
      enabled,
      estopLatched: false,
      stopReason: enabled ? "none" : "enabling-released",
      overridePercent: run.params.speedOverride.maxPercent,
      warnings: [],
      stopping: { kind: "enabling-released", isActive: !enabled, timeS: 0, distanceM: stopDistance },
      stopPredictions: { "enabling-released": { timeS: 0, distanceM: stopDistance }, watchdog: NO_STOP, "singularity-guard": NO_STOP, "instant-halt": NO_STOP },
      jointAccelPeak: [],
    });
  }
  return frames;
}
