import { ratedJointAccel, type ArmModel, type ControlParams } from "@jogwright/kinematics";
import type { ProfileParams } from "@jogwright/shared";

/**
 * Maps a profile version's stored parameters (unit-suffixed names, SI) onto the kinematics engine's
 * ControlParams (SI, unit-free names). The guard's release factor is not a profile field: 1.5·σ_stop,
 * common practice, no source (a hysteresis band so one acknowledgement covers one passage).
 */
export const GUARD_RELEASE_FACTOR = 1.5;

/**
 * Re-anchor the orientation when its error exceeds ~0.05 rad (common practice, no source): a large error
 * means the arm was held back by a cap or limit, and pulling it back later would be unexpected motion.
 */
const DRIFT_REANCHOR_ORIENTATION = 0.05;

/**
 * Per joint: the profile's fraction of the joint's rated acceleration (the arm's maxAccel, or its default,
 * ratedJointAccel) [rad/s² or m/s²]; Infinity for a joint with neither maxAccel nor maxSpeed.
 */
export function jointAccelLimits(p: ProfileParams, arm: ArmModel): Float64Array {
  const fraction = p.jointAccelFraction; // older stored versions get the default when the schema parses them
  return Float64Array.from(arm.joints, (j) => ratedJointAccel(j) * fraction);
}

/**
 * The variants a simulation steps with: world- or tool-frame twists, and a hold (a zero twist) without the
 * drift correction. Each is built by this one object literal, so all share one hidden class in V8: spread
 * copies had classes of their own, the control step's property loads on `params` went polymorphic, and a
 * trial's steady speed then varied from process to process (19–40 ms for a 10-s trial, measured).
 */
export interface ControlParamsVariant {
  twistFrame?: "world" | "tool";
  withDriftCorrection?: boolean;
}

export function toControlParams(p: ProfileParams, arm: ArmModel, variant: ControlParamsVariant = {}): ControlParams {
  const jointCount = arm.joints.length;
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
  const nullSpace = p.nullSpace;
  return {
    damping,
    dampSmallestOnly: p.dampSmallestOnly,
    jointRateCaps: caps,
    tcpLinearCap: p.tcpLinearCapMPerS,
    tcpAngularCap: p.tcpAngularCapRadPerS,
    jointLimitMargin: p.jointLimitMarginRad,
    jointLimitSlowZone: p.jointLimitSlowZoneRad,
    guard: { policy: p.guard.policy, sigmaStop: p.guard.sigmaStopM, releaseFactor: GUARD_RELEASE_FACTOR },
    driftCorrection:
      gain > 0 && variant.withDriftCorrection !== false
        ? { gain, maxPositionError: p.driftReanchorM, maxOrientationError: DRIFT_REANCHOR_ORIENTATION }
        : null,
    jointAccelLimits: jointAccelLimits(p, arm),
    // The null-space term needs redundancy: only arms with more than six joints (Liégeois 1977).
    nullSpace: nullSpace.enabled && jointCount > 6 ? { gain: nullSpace.gainPerS } : null,
    twistFrame: variant.twistFrame ?? "world",
  };
}
