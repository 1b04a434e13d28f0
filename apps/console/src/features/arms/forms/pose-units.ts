import { z } from "zod";
import { roundTo, toolPoseOf, toolTransform } from "@jogwright/shared";
import { uiNumber } from "../../../lib/form-codec.ts";

// A base or tool transform as people type it: a position in mm and roll-pitch-yaw in deg, with
// R = Rz(yaw)·Ry(pitch)·Rx(roll) about the fixed axes (packages/shared/src/arm-library.ts, toolTransform).
// The API keeps 4×4 row-major transforms (arm JSON) or position [m] + RPY [rad] (tools).

export interface PoseUi {
  xMm: number;
  yMm: number;
  zMm: number;
  rollDeg: number;
  pitchDeg: number;
  yawDeg: number;
}

const RAD_PER_DEG = Math.PI / 180;
/** Decimals kept in the form: 0.000001 mm and deg, so an unchanged value saves back within 1e-9 m / 1e-8 rad. */
const POSE_DECIMALS = 6;

/** The six pose fields of a form as typed (mm and deg), each refused with its unit when it is not a number. */
export const poseUiFields = {
  xMm: uiNumber("mm"),
  yMm: uiNumber("mm"),
  zMm: uiNumber("mm"),
  rollDeg: uiNumber("deg"),
  pitchDeg: uiNumber("deg"),
  yawDeg: uiNumber("deg"),
};
export const poseUiSchema = z.object(poseUiFields);

export const ZERO_POSE: PoseUi = { xMm: 0, yMm: 0, zMm: 0, rollDeg: 0, pitchDeg: 0, yawDeg: 0 };

/** Position [m] and RPY [rad] → the form's mm and deg. */
export function poseUiOf(positionM: readonly number[], rpyRad: readonly number[]): PoseUi {
  const mm = (m: number | undefined) => roundTo((m ?? 0) * 1000, POSE_DECIMALS);
  const deg = (rad: number | undefined) => roundTo((rad ?? 0) / RAD_PER_DEG, POSE_DECIMALS);
  return { xMm: mm(positionM[0]), yMm: mm(positionM[1]), zMm: mm(positionM[2]), rollDeg: deg(rpyRad[0]), pitchDeg: deg(rpyRad[1]), yawDeg: deg(rpyRad[2]) };
}

/** A 4×4 row-major rigid transform (absent: identity) → the form's mm and deg. */
export const poseUiOfTransform = (m: readonly number[] | undefined): PoseUi => {
  if (!m) return ZERO_POSE;
  const { positionM, rpyRad } = toolPoseOf(m);
  return poseUiOf(positionM, rpyRad);
};

/** The form's mm and deg → position [m] and RPY [rad]. */
export const poseSiOf = (p: PoseUi): { positionM: number[]; rpyRad: number[] } => ({
  positionM: [p.xMm / 1000, p.yMm / 1000, p.zMm / 1000],
  rpyRad: [p.rollDeg * RAD_PER_DEG, p.pitchDeg * RAD_PER_DEG, p.yawDeg * RAD_PER_DEG],
});

/** The form's mm and deg → the 4×4 row-major transform. */
export const transformOfPoseUi = (p: PoseUi): number[] => {
  const { positionM, rpyRad } = poseSiOf(p);
  return toolTransform(positionM, rpyRad);
};

export const isZeroPose = (p: PoseUi): boolean => Object.values(p).every((v) => v === 0);
