/**
 * @jogwright/kinematics — the numerical core: DH arms, forward pose, geometric Jacobian, singular values,
 * damped least squares, damping schedules, rate limits and the resolved-rate control step.
 * SI units throughout (m, rad, s); matrices are row-major Float64Arrays. See README.md.
 */

export type { ArmJoint, ArmKernel, ArmModel, DhConvention, JointType } from "./arm.ts";
export {
  DEFAULT_ACCEL_PER_SPEED_PER_S, KinematicsInputError, MAX_JOINTS, compileArm, ratedJointAccel, requireFiniteVector,
  requireMatrix, validateArm,
} from "./arm.ts";
export { linkTransform, modifiedLinkInto, standardLinkInto, standardToModified } from "./dh.ts";
export { forwardPose, forwardPoseInto, multiplyTransformInto } from "./pose.ts";
export { geometricJacobian, geometricJacobianInto } from "./jacobian.ts";
export { choleskyInto, choleskySolveInPlace, gramInto } from "./cholesky.ts";
export { manipulability, singularValues, svdInto, symmetricEigenInto } from "./svd.ts";
export type { SigmaTracker } from "./sigma-estimate.ts";
export { createSigmaTracker, estimateSigmaMin, resetSigmaTracker } from "./sigma-estimate.ts";
export {
  dampedLeastSquares, dampedLeastSquaresFromGramInto, dampedLeastSquaresInto, dlsFilteredFromGramInto,
} from "./dls.ts";
export type { DampingScheme, SingularValueScheduleOptions } from "./damping.ts";
export { dampingFor, dampingForScheme, dampingForSchemeInto, validateDampingScheme } from "./damping.ts";
export {
  accelScaleInto, brakingFloorInto, brakingSpeed, capScale, jointLimitScale, scaleToCaps, scaleToCapsInto,
  stoppingHorizonInto, stopsBeforeStandOffs,
} from "./limits.ts";
export { advancePoseInPlace, poseErrorInto, toolTwistToWorld, toolTwistToWorldInto } from "./twist.ts";
export type { VelocityEllipsoid } from "./ellipsoid.ts";
export { velocityEllipsoid, velocityEllipsoidInto } from "./ellipsoid.ts";
export type { DemoArm } from "./demo-arms.ts";
export { demoArms, findDemoArm } from "./demo-arms.ts";
export type {
  BindingLimit, ControlFault, ControlParams, ControlState, ControlStepReport, ControlWorkspace,
  DriftCorrectionParams, GuardPolicy, GuardState, NullSpaceParams, SingularityGuardParams,
} from "./control-step.ts";
export {
  controlStep, createControlReport, createControlState, createControlWorkspace, defaultControlParams,
  jointJogStep, resetReferencePose, setJointPositions, validateControlParams,
} from "./control-step.ts";
export { applyDeadband, applyExpo, shapeAxis, slewUniform, slewVector3, unshapeAxis } from "./shaping.ts";
export type {
  CompletedStop, GateAction, GateCommand, GateMotion, GateStopReason, MotionGateConfig, StopEstimate, StopKind,
  StoppingReport,
} from "./motion-gate.ts";
export { MotionGate, STOP_KINDS, controlledStopTime } from "./motion-gate.ts";
