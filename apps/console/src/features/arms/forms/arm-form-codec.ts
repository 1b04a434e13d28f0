import { z } from "zod";
import { armModelSchema, createArmSchema, roundTo, type ArmJoint, type ArmModel, type JointKind } from "@jogwright/shared";
import { addSchemaIssuesAtUiPaths, uiNumber } from "../../../lib/form-codec.ts";
import { isZeroPose, poseUiOfTransform, poseUiSchema, transformOfPoseUi, ZERO_POSE, type PoseUi } from "./pose-units.ts";

// The arm form (create and edit): the DH table, ranges, rated speeds and accelerations in the units people
// read them in — lengths mm, angles deg, a revolute joint's range in deg, speed deg/s, acceleration deg/s²,
// a prismatic joint's in mm, mm/s, mm/s² — and base and tool as position (mm) + roll-pitch-yaw (deg) ⇄ the
// SI arm JSON of POST/PUT /api/arms (m, rad, 4×4 transforms). An empty optional box (range end, speed,
// acceleration) is "not given".

export interface JointUi {
  type: JointKind;
  aMm: number;
  alphaDeg: number;
  dMm: number;
  thetaDeg: number;
  /** deg (revolute) or mm (prismatic); NOT_GIVEN ("") or NaN: not given. */
  min: number;
  max: number;
  /** deg/s or mm/s; not given as for min. */
  speed: number;
  /** deg/s² or mm/s²; not given as for min. */
  accel: number;
}

export interface ArmFormValues {
  name: string;
  description: string;
  convention: ArmModel["convention"];
  joints: JointUi[];
  base: PoseUi;
  tool: PoseUi;
  note: string;
}

const RAD_PER_DEG = Math.PI / 180;
/** Decimals kept in the form for the DH values (0.000001 mm / deg): an unchanged arm saves back within 1e-9 m, 1e-8 rad. */
const DECIMALS = 6;

/** The joint variable's UI unit per SI unit: deg per rad for a revolute joint, mm per m for a prismatic one. */
const jointScale = (type: JointKind) => (type === "revolute" ? 1 / RAD_PER_DEG : 1000);
/**
 * An optional value that is not given: an empty box. The form holds "" (a text box shows NaN as "NaN"); a
 * typed-then-cleared box holds NaN (valueAsNumber). Both read as "not given" (Number.isFinite is false).
 */
export const NOT_GIVEN = "" as unknown as number;
const toUi = (si: number | undefined, scale: number) => (si === undefined ? NOT_GIVEN : roundTo(si * scale, DECIMALS));
const toSi = (ui: number, scale: number) => (Number.isFinite(ui) ? ui / scale : undefined);

export const NEW_JOINT: JointUi = { type: "revolute", aMm: 0, alphaDeg: 0, dMm: 0, thetaDeg: 0, min: -170, max: 170, speed: 180, accel: NOT_GIVEN };

export function jointUiOf(j: ArmJoint): JointUi {
  const k = jointScale(j.type);
  return {
    type: j.type,
    aMm: roundTo(j.a * 1000, DECIMALS),
    alphaDeg: roundTo(j.alpha / RAD_PER_DEG, DECIMALS),
    dMm: roundTo(j.d * 1000, DECIMALS),
    thetaDeg: roundTo(j.theta / RAD_PER_DEG, DECIMALS),
    min: toUi(j.min, k),
    max: toUi(j.max, k),
    speed: toUi(j.maxSpeed, k),
    accel: toUi(j.maxAccel, k),
  };
}

export function jointOfUi(u: JointUi): ArmJoint {
  const k = jointScale(u.type);
  const joint: ArmJoint = { type: u.type, a: u.aMm / 1000, alpha: u.alphaDeg * RAD_PER_DEG, d: u.dMm / 1000, theta: u.thetaDeg * RAD_PER_DEG };
  const optional = { min: toSi(u.min, k), max: toSi(u.max, k), maxSpeed: toSi(u.speed, k), maxAccel: toSi(u.accel, k) };
  for (const [key, value] of Object.entries(optional)) if (value !== undefined) joint[key as "min"] = value;
  return joint;
}

/** The form's values → the SI arm model (not yet validated; NaN where a required box is empty). A zero base or tool is left out (identity). */
export function armModelOfUi(v: Pick<ArmFormValues, "convention" | "joints" | "base" | "tool">): ArmModel {
  const model: ArmModel = { convention: v.convention, joints: v.joints.map(jointOfUi) };
  if (!isZeroPose(v.base)) model.base = transformOfPoseUi(v.base);
  if (!isZeroPose(v.tool)) model.tool = transformOfPoseUi(v.tool);
  return model;
}

/** An arm (its name, description and one revision's model) → the form's values; a new arm starts with six empty-ish joints. */
export function armFormValuesOf(arm: { name: string; description: string; model: ArmModel } | null): ArmFormValues {
  if (!arm) return { name: "", description: "", convention: "standard", joints: [{ ...NEW_JOINT }], base: ZERO_POSE, tool: ZERO_POSE, note: "" };
  return {
    name: arm.name,
    description: arm.description,
    convention: arm.model.convention,
    joints: arm.model.joints.map(jointUiOf),
    base: poseUiOfTransform(arm.model.base),
    tool: poseUiOfTransform(arm.model.tool),
    note: "",
  };
}

const JOINT_UI_KEY: Record<string, keyof JointUi> = { type: "type", a: "aMm", alpha: "alphaDeg", d: "dMm", theta: "thetaDeg", min: "min", max: "max", maxSpeed: "speed", maxAccel: "accel" };

/** The form field of a request path ("model.joints.2.maxSpeed" → "joints.2.speed", "model.tool" → "tool.xMm"), or undefined. */
export function armFieldOfPath(path: string): string | undefined {
  const parts = path.split(".");
  if (parts[0] === "name" || parts[0] === "description" || parts[0] === "note") return parts[0];
  if (parts[0] !== "model") return undefined;
  if (parts[1] === "convention") return "convention";
  if (parts[1] === "base" || parts[1] === "tool") return `${parts[1]}.xMm`;
  if (parts[1] === "joints") {
    if (parts[2] === undefined) return "joints";
    const key = parts[3] === undefined ? "aMm" : JOINT_UI_KEY[parts[3]];
    return key ? `joints.${parts[2]}.${key}` : undefined;
  }
  return undefined;
}

const optionalNumber = z.union([z.number(), z.nan(), z.literal("")]);

const armRequestSchema = z.object({ name: z.string(), description: z.string(), model: armModelSchema, note: z.string() });
/** What the form submits: name, description, note (trimmed) and the SI model, checked with the shared schemas. */
export type ArmFormOutput = z.output<typeof armRequestSchema>;

/**
 * The codec. decode: UI values → `{ name, description, model, note }` in SI, checked with the shared
 * createArmSchema (the server's; issues on the UI fields); an edit (`isEdit`) also needs a note saying what
 * changed, as editArmSchema does. encode: SI → UI values.
 */
export function armFormCodec({ isEdit }: { isEdit: boolean }) {
  const uiSchema = z
    .object({
      name: z.string(),
      description: z.string(),
      convention: z.enum(["standard", "modified"]),
      joints: z.array(
        z.object({
          type: z.enum(["revolute", "prismatic"]),
          aMm: uiNumber("mm"),
          alphaDeg: uiNumber("deg"),
          dMm: uiNumber("mm"),
          thetaDeg: uiNumber("deg"),
          min: optionalNumber,
          max: optionalNumber,
          speed: optionalNumber,
          accel: optionalNumber,
        }),
      ),
      base: poseUiSchema,
      tool: poseUiSchema,
      note: z.string(),
    })
    .superRefine((parsed, ctx) => {
      const values = parsed as ArmFormValues; // "" in an optional box is NOT_GIVEN
      const candidate = { name: values.name, description: values.description, model: armModelOfUi(values), note: values.note };
      addSchemaIssuesAtUiPaths(createArmSchema, candidate, ctx, (path) => armFieldOfPath(path) ?? "root");
      if (isEdit && values.note.trim().length < 3) ctx.addIssue({ code: "custom", message: "Say what changed (at least 3 characters)", path: ["note"] });
    }) as unknown as z.ZodType<ArmFormValues, ArmFormValues>;
  return z.codec(uiSchema, armRequestSchema, {
    decode: (v) => ({ name: v.name.trim(), description: v.description.trim(), model: armModelOfUi(v), note: v.note.trim() }),
    encode: ({ name, description, model, note }) => ({ ...armFormValuesOf({ name, description, model }), note }),
  });
}
