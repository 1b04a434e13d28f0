import { mToMm, radToDeg, type ArmJoint } from "@jogwright/shared";
import { formatFixed } from "../../../lib/format.ts";

// The API is SI (m, rad, m/s, rad/s). The joint variable of a revolute joint is an angle, of a
// prismatic joint a length, so range, speed and pose values take their unit from the joint type.

export interface DisplayValue {
  text: string;
  unit: string;
}

export function jointValue(joint: ArmJoint, si: number): DisplayValue {
  return joint.type === "revolute"
    ? { text: formatFixed(radToDeg(si), 1), unit: "deg" }
    : { text: formatFixed(mToMm(si), 1), unit: "mm" };
}

export function jointSpeed(joint: ArmJoint, si: number): DisplayValue {
  return joint.type === "revolute"
    ? { text: formatFixed(radToDeg(si), 0), unit: "deg/s" }
    : { text: formatFixed(mToMm(si), 0), unit: "mm/s" };
}

export function jointAccel(joint: ArmJoint, si: number): DisplayValue {
  return joint.type === "revolute"
    ? { text: formatFixed(radToDeg(si), 0), unit: "deg/s²" }
    : { text: formatFixed(mToMm(si), 0), unit: "mm/s²" };
}

export const lengthMm = (m: number): string => formatFixed(mToMm(m), 1);
export const angleDeg = (rad: number): string => formatFixed(radToDeg(rad), 1);
