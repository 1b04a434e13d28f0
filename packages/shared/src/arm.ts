import { z } from "zod";

/**
 * Arm JSON of PRODUCT.md ("Conventions"). SI units: metres, radians, metres or radians per second (and
 * per second squared).
 * base and tool are 4x4 homogeneous transforms, row-major.
 */
const finite = z.number().refine(Number.isFinite, "must be a finite number");
const transform = z.array(finite).length(16, "a 4x4 transform has 16 numbers (row-major)");

export const jointSchema = z
  .object({
    type: z.enum(["revolute", "prismatic"]),
    a: finite,
    alpha: finite,
    d: finite,
    theta: finite,
    min: finite.optional(),
    max: finite.optional(),
    maxSpeed: finite.positive("maxSpeed must be above zero").optional(),
    /** Rated acceleration, rad/s² (m/s² for a prismatic joint); absent → a default from maxSpeed (kinematics). */
    maxAccel: finite.positive("maxAccel must be above zero").optional(),
  })
  .refine((j) => j.min === undefined || j.max === undefined || j.min < j.max, {
    message: "min must be below max",
    path: ["min"],
  });

export const armModelSchema = z.object({
  convention: z.enum(["standard", "modified"]),
  joints: z.array(jointSchema).min(1, "an arm needs at least one joint").max(12, "at most 12 joints"),
  base: transform.optional(),
  tool: transform.optional(),
});
export type ArmModel = z.infer<typeof armModelSchema>;
export type ArmJoint = z.infer<typeof jointSchema>;

/** An arm as stored and listed by the API. */
export const armSchema = z.object({
  id: z.number().int(),
  name: z.string(),
  description: z.string(),
  model: armModelSchema,
  /** The ready pose, radians (or metres for prismatic joints). */
  readyPose: z.array(finite),
  createdAt: z.string(),
  updatedAt: z.string(),
});
export type Arm = z.infer<typeof armSchema>;
