import type { ArmModel } from "@jogwright/kinematics";
import { cartesianMap, jointMap, type CartesianMapRequest, type JointMapRequest, type MapGrid } from "./singularity-map.ts";

/** A singularity map as the worker pool computes it (trial-pool.ts): a 200 × 200 map takes up to a second, never on the request thread. */
export type MapJob = { kind: "joints"; arm: ArmModel; request: JointMapRequest } | { kind: "cartesian"; arm: ArmModel; request: CartesianMapRequest };

export function mapJob(job: MapJob): MapGrid {
  return job.kind === "joints" ? jointMap(job.arm, job.request) : cartesianMap(job.arm, job.request);
}
