import { z } from "zod";
import { toolInputSchema, type Tool, type ToolInput } from "@jogwright/shared";
import { addSchemaIssuesAtUiPaths, uiNumber } from "../../../lib/form-codec.ts";
import { poseSiOf, poseUiFields, poseUiOf, ZERO_POSE, type PoseUi } from "./pose-units.ts";

// The tool form: name, TCP offset as position (mm) + roll-pitch-yaw (deg), mass (kg), note ⇄ the SI
// ToolInput of the tool routes (positionM, rpyRad).

export type ToolFormValues = PoseUi & { name: string; massKg: number; note: string };

export const toolFormValuesOf = (tool: Pick<Tool, "name" | "positionM" | "rpyRad" | "massKg" | "note"> | null): ToolFormValues =>
  tool ? { name: tool.name, ...poseUiOf(tool.positionM, tool.rpyRad), massKg: tool.massKg, note: tool.note } : { name: "", ...ZERO_POSE, massKg: 0, note: "" };

export const toolInputOf = (v: ToolFormValues): z.input<typeof toolInputSchema> => ({ name: v.name, ...poseSiOf(v), massKg: v.massKg, note: v.note });

/** The form field of a request path ("positionM.2" → "zMm", "rpyRad.0" → "rollDeg"). */
export function toolFieldOfPath(path: string): keyof ToolFormValues | undefined {
  const [head, index] = path.split(".");
  if (head === "positionM") return (["xMm", "yMm", "zMm"] as const)[Number(index ?? 0)] ?? "xMm";
  if (head === "rpyRad") return (["rollDeg", "pitchDeg", "yawDeg"] as const)[Number(index ?? 0)] ?? "rollDeg";
  if (head === "name" || head === "massKg" || head === "note") return head;
  return undefined;
}

const uiSchema = z
  .object({
    name: z.string(),
    ...poseUiFields,
    massKg: uiNumber("kg"),
    note: z.string(),
  })
  .superRefine((v, ctx) => addSchemaIssuesAtUiPaths(toolInputSchema, toolInputOf(v), ctx, (path) => toolFieldOfPath(path) ?? "root"));

/** decode: UI values → the SI ToolInput (checked with the shared toolInputSchema); encode: a stored tool → UI values. */
export const toolFormCodec = z.codec(uiSchema, toolInputSchema, {
  decode: (v) => toolInputOf(v) as ToolInput,
  encode: (tool) => toolFormValuesOf({ ...tool, note: tool.note ?? "" }),
});
