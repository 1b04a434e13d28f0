import type { ControlParams } from "@jogwright/kinematics";
import type { ProfileParams } from "@jogwright/shared";

/**
 * Maps a profile version's stored parameters (unit-suffixed names, SI) onto the kinematics engine's
 * ControlParams (SI, unit-free names). The guard's release factor is not a profile field: 1.5·σ_stop,
 * common practice, no source (a hysteresis band so one acknowledgement covers one passage).
 */
export const GUARD_RELEASE_FACTOR = 1.5;

export function toControlParams(p: ProfileParams, jointCount: number): ControlParams {
  const damping: ControlParams["damping"] =
    p.damping.kind === "fixed"
      ? { kind: "fixed", lambda: p.damping.lambdaM }
      : p.damping.kind === "singular-value"
        ? { kind: "singular-value", epsilon: p.damping.epsilonM, lambdaMax: p.damping.lambdaMaxM }
        : { kind: "manipulability", w0: p.damping.w0M3, lambda0: p.damping.lambda0M };
  // A profile saved for an arm of another joint count would be refused by the profiles service; guard anyway.
  const caps = new Float64Array(jointCount).fill(Infinity);
  for (let i = 0; i < jointCount && i < p.jointRateCapsRadPerS.length; i++) caps[i] = p.jointRateCapsRadPerS[i]!;
  const gain = p.driftCorrectionGainPerS;
  return {
    damping,
    dampSmallestOnly: p.dampSmallestOnly,
    jointRateCaps: caps,
    tcpLinearCap: p.tcpLinearCapMPerS,
    tcpAngularCap: p.tcpAngularCapRadPerS,
    jointLimitMargin: p.jointLimitMarginRad,
    jointLimitSlowZone: p.jointLimitSlowZoneRad,
    guard: { policy: p.guard.policy, sigmaStop: p.guard.sigmaStopM, releaseFactor: GUARD_RELEASE_FACTOR },
    // Re-anchor when the error grows past 5 mm / ~0.05 rad (common practice, no source): a large error
    // means the arm was held by a cap or limit, and pulling it back later would be unexpected motion.
    driftCorrection: gain > 0 ? { gain, maxPositionError: 0.005, maxOrientationError: 0.05 } : null,
    twistFrame: "world",
  };
}
