import type { Arm, JointKind } from "@jogwright/shared";

/** The arm's joint types (for deg/s vs mm/s caps) and rated speeds (SI) as the ceiling check needs them. */
export const jointKindsOf = (arm: Arm | undefined): JointKind[] | undefined => arm?.model.joints.map((j) => j.type);
export const ratedSpeedsOf = (arm: Arm | undefined): (number | undefined)[] => arm?.model.joints.map((j) => j.maxSpeed) ?? [];
