import { z } from "zod";
import { trialDefinitionSchema, UNITS, type JointKind, type TrialDefinition } from "@jogwright/shared";
import { addSchemaIssuesAtUiPaths, uiNumber } from "../../../lib/form-codec.ts";

const { metresToMm: mm, mPerSToMmPerS: mmPerS, radToDeg: deg, radPerSToDegPerS: degPerS } = UNITS;
type Vec3 = [number, number, number];
const each = (v: readonly number[], f: (x: number) => number) => v.map(f) as Vec3;

// The custom-trial form: UI units (mm, mm/s, deg, deg/s; a sliding joint's position in mm) ⇄ the SI
// TrialDefinition of POST /api/bench/trials. Expressions stay text with their own units (mathjs on the
// server checks them: `100 mm/s * sin(2 pi t / 4 s)`); the server's issues come back on their fields.


const vec3 = z.tuple([uiNumber(), uiNumber(), uiNumber()]);
const text3 = z.tuple([z.string(), z.string(), z.string()]);
const frame = z.enum(["world", "tool"]);

const uiSegmentSchema = z.discriminatedUnion("kind", [
  z.object({ kind: z.literal("twist"), frame, linearMmPerS: vec3, angularDegPerS: vec3, durationS: uiNumber("s") }),
  z.object({ kind: z.literal("waypoint"), positionMm: vec3, speedMmPerS: uiNumber("mm/s"), timeoutS: uiNumber("s") }),
  z.object({ kind: z.literal("expression"), frame, linear: text3, angular: text3, durationS: uiNumber("s") }),
]);
export type UiSegment = z.infer<typeof uiSegmentSchema>;

/** SI field names → the form's, per segment kind and for the start pose. */
const UI_NAME: Record<string, string> = { linearMPerS: "linearMmPerS", angularRadPerS: "angularDegPerS", positionM: "positionMm", speedMPerS: "speedMmPerS", startPose: "startPose" };

/** The form field of a TrialDefinition path ("segments.2.linearMPerS.0" → "segments.2.linearMmPerS.0"). */
export function uiPathOfTrialPath(path: string): string {
  const parts = path.split(".");
  return parts.map((p) => UI_NAME[p] ?? p).join(".");
}

export function trialFormCodec(jointKinds: readonly JointKind[]) {
  const poseUnit = (i: number) => (jointKinds[i] === "prismatic" ? mm : deg);
  const uiSchema = z
    .object({
      name: z.string(),
      description: z.string(),
      /** Per joint: deg, or mm for a sliding joint. */
      startPose: z.array(uiNumber()),
      segments: z.array(uiSegmentSchema),
    })
    .superRefine((values, ctx) => addSchemaIssuesAtUiPaths(trialDefinitionSchema, fromUi(values), ctx, uiPathOfTrialPath));
  type Values = z.input<typeof uiSchema>;

  function fromUi(v: Values): z.input<typeof trialDefinitionSchema> {
    return {
      name: v.name,
      description: v.description,
      startPose: v.startPose.map((q, i) => poseUnit(i).toSi(q)),
      segments: v.segments.map((s) => {
        if (s.kind === "twist") {
          return { kind: "twist", frame: s.frame, linearMPerS: each(s.linearMmPerS, mmPerS.toSi), angularRadPerS: each(s.angularDegPerS, degPerS.toSi), durationS: s.durationS };
        }
        if (s.kind === "waypoint") return { kind: "waypoint", positionM: each(s.positionMm, mm.toSi), speedMPerS: mmPerS.toSi(s.speedMmPerS), timeoutS: s.timeoutS };
        return { kind: "expression", frame: s.frame, linear: s.linear, angular: s.angular, durationS: s.durationS };
      }),
    };
  }

  function toUi(d: TrialDefinition): Values {
    const round = (x: number, digits = 6) => Number(x.toFixed(digits));
    return {
      name: d.name,
      description: d.description,
      startPose: d.startPose.map((q, i) => round(poseUnit(i).toUi(q), 4)),
      segments: d.segments.map((s): UiSegment => {
        if (s.kind === "twist") return { kind: "twist", frame: s.frame, linearMmPerS: each(s.linearMPerS, (x) => round(mmPerS.toUi(x))), angularDegPerS: each(s.angularRadPerS, (x) => round(degPerS.toUi(x))), durationS: s.durationS };
        if (s.kind === "waypoint") return { kind: "waypoint", positionMm: each(s.positionM, (x) => round(mm.toUi(x))), speedMmPerS: round(mmPerS.toUi(s.speedMPerS)), timeoutS: s.timeoutS };
        return { kind: "expression", frame: s.frame, linear: s.linear, angular: s.angular, durationS: s.durationS };
      }),
    };
  }

  return {
    /** decode: the form's UI values → the SI definition (checked with the shared schema); encode: SI → UI. */
    codec: z.codec(uiSchema, trialDefinitionSchema, { decode: (v) => fromUi(v) as TrialDefinition, encode: (d) => toUi(trialDefinitionSchema.parse(d)) }),
    toUi,
  };
}

export type TrialFormValues = ReturnType<ReturnType<typeof trialFormCodec>["toUi"]>;

/** A new segment of each kind, in UI units. */
export const NEW_SEGMENT: Record<UiSegment["kind"], UiSegment> = {
  twist: { kind: "twist", frame: "world", linearMmPerS: [0, 50, 0], angularDegPerS: [0, 0, 0], durationS: 2 },
  waypoint: { kind: "waypoint", positionMm: [500, 0, 500], speedMmPerS: 100, timeoutS: 10 },
  expression: { kind: "expression", frame: "world", linear: ["0", "50 mm/s * sin(2 pi t / 4 s)", "0"], angular: ["0", "0", "0"], durationS: 4 },
};
