/**
 * Demo arms of the invented scenario (PRODUCT.md "Demo scenario"): a recycling plant dismantles damaged
 * electric-vehicle battery packs inside a shielded cell. SI units: DH lengths in m, angles and limits in
 * rad, speeds in rad/s, accelerations in rad/s²; degree values below are converted once here.
 * Rated accelerations (maxAccel) are our own choice, not a datasheet: 4 × the rated speed per second, so
 * each joint reaches its rated speed from rest in 0.25 s (common practice, no source; the same rule as
 * DEFAULT_ACCEL_PER_SPEED_PER_S, written out so the arm data carry them explicitly).
 */

import type { ArmModel } from "./arm.ts";

export interface DemoArm {
  slug: string;
  name: string;
  description: string;
  model: ArmModel;
  /** Ready pose [rad]: away from every singularity and joint limit. */
  readyPose: number[];
}

const DEG = Math.PI / 180;
const PI = Math.PI;

/** 4x4 row-major transform: pure translation along z by dz [m]. */
function toolAlongZ(dz: number): number[] {
  return [1, 0, 0, 0, 0, 1, 0, 0, 0, 0, 1, dz, 0, 0, 0, 1];
}

/** Six-axis spherical-wrist arm, standard DH, exactly the table of PRODUCT.md. */
const cellArm6: DemoArm = {
  slug: "cell-arm-6",
  name: "Cell arm, six-axis",
  description:
    "Six-axis arm with a spherical wrist that unbolts and lifts modules out of damaged battery packs in the " +
    "shielded dismantling cell. Tool: 160 mm socket-and-gripper head on the flange. Standard DH.",
  model: {
    convention: "standard",
    joints: [
      { type: "revolute", a: 0.075, alpha: -PI / 2, d: 0.445, theta: 0, min: -170 * DEG, max: 170 * DEG, maxSpeed: 150 * DEG, maxAccel: 600 * DEG },
      { type: "revolute", a: 0.4, alpha: 0, d: 0, theta: -PI / 2, min: -100 * DEG, max: 145 * DEG, maxSpeed: 150 * DEG, maxAccel: 600 * DEG },
      { type: "revolute", a: 0.035, alpha: -PI / 2, d: 0, theta: 0, min: -155 * DEG, max: 150 * DEG, maxSpeed: 190 * DEG, maxAccel: 760 * DEG },
      { type: "revolute", a: 0, alpha: PI / 2, d: 0.42, theta: 0, min: -185 * DEG, max: 185 * DEG, maxSpeed: 300 * DEG, maxAccel: 1200 * DEG },
      { type: "revolute", a: 0, alpha: -PI / 2, d: 0, theta: 0, min: -120 * DEG, max: 120 * DEG, maxSpeed: 300 * DEG, maxAccel: 1200 * DEG },
      { type: "revolute", a: 0, alpha: 0, d: 0.09, theta: 0, min: -350 * DEG, max: 350 * DEG, maxSpeed: 450 * DEG, maxAccel: 1800 * DEG },
    ],
    tool: toolAlongZ(0.16),
  },
  readyPose: [0, -20 * DEG, 30 * DEG, 0, 50 * DEG, 0],
};

/**
 * Seven-axis redundant arm (shoulder–elbow–wrist with a small elbow offset), modified DH (Craig 1986):
 * row i holds alpha_{i-1}, a_{i-1}, d_i, theta_i. Our own invention.
 */
const cellArm7: DemoArm = {
  slug: "cell-arm-7",
  name: "Cell arm, seven-axis",
  description:
    "Seven-axis redundant arm that reaches around the pack housing to cut cables and lift cover plates; " +
    "the spare axis lets it keep its elbow clear of the cell wall. Tool: 200 mm cutter head. Modified DH.",
  model: {
    convention: "modified",
    joints: [
      { type: "revolute", alpha: 0, a: 0, d: 0.34, theta: 0, min: -170 * DEG, max: 170 * DEG, maxSpeed: 100 * DEG, maxAccel: 400 * DEG },
      { type: "revolute", alpha: -PI / 2, a: 0, d: 0, theta: 0, min: -120 * DEG, max: 120 * DEG, maxSpeed: 100 * DEG, maxAccel: 400 * DEG },
      { type: "revolute", alpha: PI / 2, a: 0, d: 0.4, theta: 0, min: -170 * DEG, max: 170 * DEG, maxSpeed: 130 * DEG, maxAccel: 520 * DEG },
      { type: "revolute", alpha: PI / 2, a: 0.04, d: 0, theta: 0, min: -135 * DEG, max: 135 * DEG, maxSpeed: 130 * DEG, maxAccel: 520 * DEG },
      { type: "revolute", alpha: -PI / 2, a: -0.04, d: 0.39, theta: 0, min: -170 * DEG, max: 170 * DEG, maxSpeed: 180 * DEG, maxAccel: 720 * DEG },
      { type: "revolute", alpha: PI / 2, a: 0, d: 0, theta: 0, min: -120 * DEG, max: 120 * DEG, maxSpeed: 180 * DEG, maxAccel: 720 * DEG },
      { type: "revolute", alpha: -PI / 2, a: 0, d: 0, theta: 0, min: -175 * DEG, max: 175 * DEG, maxSpeed: 240 * DEG, maxAccel: 960 * DEG },
    ],
    tool: toolAlongZ(0.2),
  },
  readyPose: [0, 30 * DEG, 0, -60 * DEG, 0, 60 * DEG, 0],
};

export const demoArms: DemoArm[] = [cellArm6, cellArm7];

/** The demo arm with this slug, or undefined. */
export function findDemoArm(slug: string): DemoArm | undefined {
  return demoArms.find((a) => a.slug === slug);
}
