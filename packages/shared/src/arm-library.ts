import { z } from "zod";
import { armModelSchema, armSchema } from "./arm.ts";
import { profileParamsSchema } from "./profile.ts";
import { singleLineName } from "./text.ts";

/**
 * The arm library (issue 12): arm revisions, tools, uploads and profile-version files. SI units inside
 * (metres, radians, kilograms); the console converts at its edge. A tool's TCP offset is a position plus
 * roll-pitch-yaw: R = Rz(yaw)·Ry(pitch)·Rx(roll), about the flange's fixed axes (common practice, no source).
 */
const finite = z.number().refine(Number.isFinite, "must be a finite number");
const vector3 = z.array(finite).length(3, "three numbers: x, y, z");

/** One problem in an uploaded file: the line it is on (1-based; null when the file as a whole) and the field. */
export const armUploadIssueSchema = z.object({
  line: z.number().int().positive().nullable(),
  field: z.string(),
  message: z.string(),
});
export type ArmUploadIssue = z.infer<typeof armUploadIssueSchema>;

export const ARM_UPLOAD_FORMATS = ["json", "csv"] as const;
export type ArmUploadFormat = (typeof ARM_UPLOAD_FORMATS)[number];

/** `POST /api/arms/upload` without saving: the parsed arm and its σ at the zero pose, for the preview. */
export const armUploadPreviewSchema = z.object({
  format: z.enum(ARM_UPLOAD_FORMATS),
  model: armModelSchema,
  /** Smallest singular value of the 6×n geometric Jacobian at q = 0 (m and rad rows). */
  sigmaMinAtZero: z.number(),
  /** Yoshikawa's manipulability √det(J Jᵀ) at q = 0. */
  manipulabilityAtZero: z.number(),
});
export type ArmUploadPreview = z.infer<typeof armUploadPreviewSchema>;

export const toolInputSchema = z.object({
  name: singleLineName({ requiredMessage: "name the tool", max: 120 }),
  /** TCP position in the flange frame [m]. */
  positionM: vector3,
  /** TCP orientation in the flange frame [rad]: roll, pitch, yaw (see the top of this file). */
  rpyRad: vector3,
  massKg: finite.nonnegative("mass cannot be negative").max(1000, "at most 1000 kg"),
  note: z.string().trim().max(2000).default(""),
});
export type ToolInput = z.infer<typeof toolInputSchema>;

export const toolSchema = toolInputSchema.extend({
  id: z.number().int(),
  armRevisionId: z.number().int(),
  /** Set when the tool was retired (it stays readable for the versions that name it). */
  retiredAt: z.string().nullable(),
  createdAt: z.string(),
});
export type Tool = z.infer<typeof toolSchema>;

export const armRevisionSchema = z.object({
  id: z.number().int(),
  armId: z.number().int(),
  /** 1, 2, … per arm. */
  revision: z.number().int().positive(),
  model: armModelSchema,
  readyPose: z.array(finite),
  note: z.string(),
  createdBy: z.string().nullable(),
  /** The author's display name (null for the seed's revisions). */
  createdByName: z.string().nullable().default(null),
  createdAt: z.string(),
  /** Profile versions that name this revision (a used revision is never changed in place). */
  versionCount: z.number().int().nonnegative(),
  tools: z.array(toolSchema),
});
export type ArmRevision = z.infer<typeof armRevisionSchema>;

/** `GET /api/arms/:id`: the arm as today (its latest revision) with every revision, newest first. */
export const armDetailSchema = z.object({
  arm: armSchema.extend({ latestRevisionId: z.number().int(), revision: z.number().int() }),
  revisions: z.array(armRevisionSchema),
});
export type ArmDetail = z.infer<typeof armDetailSchema>;

/** `POST /api/arms/upload?save=1`: the form fields saved with the file (multipart, beside `file`). */
export const armUploadFieldsSchema = z.object({
  name: singleLineName({ requiredMessage: "name the arm", max: 120 }),
  description: z.string().trim().max(4000).default(""),
  note: z.string().trim().max(2000).default(""),
});
export type ArmUploadFields = z.infer<typeof armUploadFieldsSchema>;

const readyPoseSchema = z.array(finite).max(12);

/** `POST /api/arms`: a new arm; its first revision is the model given. */
export const createArmSchema = z
  .object({
    name: singleLineName({ requiredMessage: "name the arm", max: 120 }),
    description: z.string().trim().max(4000).default(""),
    model: armModelSchema,
    /** Radians (metres for prismatic joints); zeros when absent. */
    readyPose: readyPoseSchema.optional(),
    note: z.string().trim().max(2000).default(""),
  })
  .refine((a) => a.readyPose === undefined || a.readyPose.length === a.model.joints.length, {
    message: "one ready-pose value per joint",
    path: ["readyPose"],
  });
export type CreateArmInput = z.infer<typeof createArmSchema>;

/** `PUT /api/arms/:id`: a new revision (name and description change in place; they are not kinematics). */
export const editArmSchema = z
  .object({
    /** The revision the edit was made on; 409 `stale_parent` when it is not the latest. */
    parentRevisionId: z.number().int().positive(),
    name: singleLineName({ requiredMessage: "name the arm", max: 120 }).optional(),
    description: z.string().trim().max(4000).optional(),
    model: armModelSchema,
    readyPose: readyPoseSchema.optional(),
    note: z.string().trim().min(3, "say what changed").max(2000),
  })
  .refine((a) => a.readyPose === undefined || a.readyPose.length === a.model.joints.length, {
    message: "one ready-pose value per joint",
    path: ["readyPose"],
  });
export type EditArmInput = z.infer<typeof editArmSchema>;

/** A profile version's file (`GET /api/versions/:id/export`, `POST /api/profiles/:id/import`). */
export const VERSION_FILE_FORMAT = "jogwright-profile-version";
export const VERSION_FILE_SCHEMA_VERSION = 1;
export const versionFileSchema = z.object({
  format: z.literal(VERSION_FILE_FORMAT),
  schemaVersion: z.literal(VERSION_FILE_SCHEMA_VERSION),
  profile: z.object({ id: z.number().int(), name: z.string() }),
  version: z.object({ id: z.number().int(), number: z.number().int(), note: z.string() }),
  arm: z.object({ id: z.number().int(), name: z.string(), revisionId: z.number().int(), revision: z.number().int() }),
  tool: z.object({ id: z.number().int(), name: z.string() }).nullable(),
  params: profileParamsSchema,
  /** SHA-256 of the canonical JSON of `params` (hashing.ts); an import refuses a file whose params do not match it. */
  paramsSha256: z.string().regex(/^[0-9a-f]{64}$/, "a SHA-256 in hex"),
  exportedAt: z.string(),
});
export type VersionFile = z.infer<typeof versionFileSchema>;

/**
 * A tool's TCP offset as the 4×4 row-major flange→TCP transform of the arm JSON: R = Rz(yaw)·Ry(pitch)·Rx(roll)
 * (fixed-axis roll-pitch-yaw, common practice, no source), translation = position [m].
 */
export function toolTransform(positionM: readonly number[], rpyRad: readonly number[]): number[] {
  const [cr, sr, cp, sp, cy, sy] = [Math.cos(rpyRad[0]!), Math.sin(rpyRad[0]!), Math.cos(rpyRad[1]!), Math.sin(rpyRad[1]!), Math.cos(rpyRad[2]!), Math.sin(rpyRad[2]!)];
  return [
    cy * cp, cy * sp * sr - sy * cr, cy * sp * cr + sy * sr, positionM[0]!,
    sy * cp, sy * sp * sr + cy * cr, sy * sp * cr - cy * sr, positionM[1]!,
    -sp, cp * sr, cp * cr, positionM[2]!,
    0, 0, 0, 1,
  ];
}

/** The inverse of `toolTransform` for a rigid transform: position [m] and roll-pitch-yaw [rad]. */
export function toolPoseOf(m: readonly number[]): { positionM: number[]; rpyRad: number[] } {
  return {
    positionM: [m[3]!, m[7]!, m[11]!],
    rpyRad: [Math.atan2(m[9]!, m[10]!), Math.atan2(-m[8]!, Math.hypot(m[0]!, m[4]!)), Math.atan2(m[4]!, m[0]!)],
  };
}

// Responses of the arms routes (the console parses every answer with these).

/** GET /api/arms: every arm as its latest revision. */
export const armListResponseSchema = z.object({ arms: z.array(armSchema) });
/** POST /api/arms/upload without saving: the parsed arm and σ at the zero pose. */
export const armUploadPreviewResponseSchema = z.object({ preview: armUploadPreviewSchema });
/** POST /api/arms/upload?save=1: the preview and the saved arm with its revision 1. */
export const armUploadSavedResponseSchema = armDetailSchema.extend({ preview: armUploadPreviewSchema });
/** The tool routes: the tool as stored. */
export const toolResponseSchema = z.object({ tool: toolSchema });
