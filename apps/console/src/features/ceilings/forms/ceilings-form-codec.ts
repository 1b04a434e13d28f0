import { z } from "zod";
import { ceilingsSchema, EVIDENCE_RULES, guardPolicySchema, roundTo, UNITS, type Ceilings } from "@jogwright/shared";
import { addSchemaIssuesAtUiPaths, uiNumber } from "../../../lib/form-codec.ts";

// The ceilings form: UI units (mm/s, deg/s, %, ms, mm, m/s², and mm for λ as everywhere else) ⇄ the SI
// `ceilings` of PUT /api/ceilings.

const NOTE_MAX = 2000;

/** Which UI field shows an issue of each SI ceiling. */
const UI_KEY_OF: Record<keyof Ceilings, keyof CeilingsFormValues> = {
  tcpLinearMaxMPerS: "tcpLinearMaxMmPerS",
  tcpAngularMaxRadPerS: "tcpAngularMaxDegPerS",
  jointSpeedFractionMax: "jointSpeedFractionMaxPercent",
  watchdogMaxMs: "watchdogMaxMs",
  allowedGuardPolicies: "allowedGuardPolicies",
  lambdaMaxMinM: "lambdaMaxMinMm",
  stoppingDistanceMaxM: "stoppingDistanceMaxMm",
  decelerationMinMPerS2: "decelerationMinMPerS2",
  evidenceRequired: "evidenceRequired",
};

/** The UI field of a ceilings path ("tcpLinearMaxMPerS" → "tcpLinearMaxMmPerS"), or undefined. */
export const uiFieldOfCeilingsPath = (path: string): keyof CeilingsFormValues | undefined => UI_KEY_OF[path.split(".")[0] as keyof Ceilings];

const ceilingsUiSchema = z
  .object({
    tcpLinearMaxMmPerS: uiNumber("mm/s"),
    tcpAngularMaxDegPerS: uiNumber("deg/s"),
    jointSpeedFractionMaxPercent: uiNumber("%"),
    watchdogMaxMs: uiNumber("ms"),
    // A group of checkboxes with none ticked reads as false in react-hook-form.
    allowedGuardPolicies: z.union([z.array(guardPolicySchema), z.literal(false)]),
    lambdaMaxMinMm: uiNumber("mm"),
    stoppingDistanceMaxMm: uiNumber("mm"),
    decelerationMinMPerS2: uiNumber("m/s²"),
    evidenceRequired: z.enum(EVIDENCE_RULES),
    note: z.string().max(NOTE_MAX, `At most ${NOTE_MAX} characters`),
  })
  .superRefine((values, ctx) => {
    addSchemaIssuesAtUiPaths(ceilingsSchema, ceilingsFromUi(values), ctx, (path) => uiFieldOfCeilingsPath(path) ?? "root");
  });

/** The form's values: the ceilings in the units people set them in, and the note for the audit trail. */
export type CeilingsFormValues = z.input<typeof ceilingsUiSchema>;

const ceilingsRequestSchema = z.object({ ceilings: ceilingsSchema, note: z.string() });
/** What the form submits: SI ceilings (checked with the shared ceilingsSchema) and the trimmed note. */
export type CeilingsFormOutput = z.output<typeof ceilingsRequestSchema>;

function ceilingsFromUi(v: CeilingsFormValues): z.input<typeof ceilingsSchema> {
  return {
    tcpLinearMaxMPerS: UNITS.mPerSToMmPerS.toSi(v.tcpLinearMaxMmPerS),
    tcpAngularMaxRadPerS: UNITS.radPerSToDegPerS.toSi(v.tcpAngularMaxDegPerS),
    jointSpeedFractionMax: UNITS.fractionToPercent.toSi(v.jointSpeedFractionMaxPercent),
    watchdogMaxMs: v.watchdogMaxMs,
    allowedGuardPolicies: v.allowedGuardPolicies === false ? [] : v.allowedGuardPolicies,
    lambdaMaxMinM: UNITS.metresToMm.toSi(v.lambdaMaxMinMm),
    stoppingDistanceMaxM: UNITS.metresToMm.toSi(v.stoppingDistanceMaxMm),
    decelerationMinMPerS2: v.decelerationMinMPerS2,
    evidenceRequired: v.evidenceRequired,
  };
}

/** SI → UI, rounded to what each field shows (0.1 mm/s, 0.01 deg/s, 0.1 %, 0.1 mm, 0.001 m/s², 0.1 mm for λ). */
export function ceilingsFormValuesOf(ceilings: z.input<typeof ceilingsSchema>, note = ""): CeilingsFormValues {
  const c = ceilingsSchema.parse(ceilings);
  return {
    tcpLinearMaxMmPerS: roundTo(UNITS.mPerSToMmPerS.toUi(c.tcpLinearMaxMPerS), 1),
    tcpAngularMaxDegPerS: roundTo(UNITS.radPerSToDegPerS.toUi(c.tcpAngularMaxRadPerS), 2),
    jointSpeedFractionMaxPercent: roundTo(UNITS.fractionToPercent.toUi(c.jointSpeedFractionMax), 1),
    watchdogMaxMs: c.watchdogMaxMs,
    allowedGuardPolicies: [...c.allowedGuardPolicies],
    lambdaMaxMinMm: roundTo(UNITS.metresToMm.toUi(c.lambdaMaxMinM), 1),
    stoppingDistanceMaxMm: roundTo(UNITS.metresToMm.toUi(c.stoppingDistanceMaxM), 1),
    decelerationMinMPerS2: roundTo(c.decelerationMinMPerS2, 3),
    evidenceRequired: c.evidenceRequired,
    note,
  };
}

/** decode: the form's UI values → `{ ceilings, note }` in SI; encode: stored ceilings → the form's values. */
export const ceilingsFormCodec = z.codec(ceilingsUiSchema, ceilingsRequestSchema, {
  decode: (values) => ({ ceilings: ceilingsFromUi(values), note: values.note.trim() }),
  encode: ({ ceilings, note }) => ceilingsFormValuesOf(ceilings, note),
});
