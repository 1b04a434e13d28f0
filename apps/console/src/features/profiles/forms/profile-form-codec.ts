import { z } from "zod";
import {
  DAMPING_KINDS,
  GUARD_POLICIES,
  NUMERIC_PROFILE_FIELDS,
  profileParamsFromUi,
  profileParamsSchema,
  profileParamsToUi,
  uiKeyForProfilePath,
  type JointKind,
  type ProfileParams,
  type ProfileUiValues,
} from "@jogwright/shared";
import { addSchemaIssuesAtUiPaths, enterANumber, uiNumber } from "../../../lib/form-codec.ts";

// The profile parameters form: every parameter in its UI unit (packages/shared/src/profile-fields.ts says
// which: deg/s, mm/s, %, ms, …) ⇄ the SI ProfileParams the server stores. The per-joint caps take their
// unit from the joint (revolute deg/s, prismatic mm/s), so the codec is made for an arm's joint kinds.

const NOTE_MAX = 2000;

/** The form state: every parameter in its UI unit (ProfileUiValues) plus the version note. */
export type ProfileFormValues = ProfileUiValues & { note: string };

const profileRequestSchema = z.object({ params: profileParamsSchema, note: z.string() });
/** What the form submits: SI parameters (checked with the shared profileParamsSchema) and the trimmed note. */
export type ProfileFormOutput = z.output<typeof profileRequestSchema>;

/** SI parameters → the form's values (each rounded to its field's UI precision). */
export const profileFormValuesOf = (params: ProfileParams, note: string, jointKinds: readonly JointKind[] | undefined): ProfileFormValues => ({
  ...profileParamsToUi(params, jointKinds),
  note,
});

/** The form's UI values → the SI candidate, not yet validated (NaN where a box is empty). */
export const profileCandidateOf = (values: ProfileFormValues, jointKinds: readonly JointKind[] | undefined) =>
  profileParamsFromUi(values, jointKinds) as z.input<typeof profileParamsSchema>;

/**
 * The codec for one arm's joint kinds. decode: UI values → `{ params, note }` in SI, validated with the
 * shared profileParamsSchema (the server's), its issues on the UI fields; encode: SI → UI values.
 */
export function profileFormCodec(jointKinds: readonly JointKind[] | undefined) {
  const uiSchema = z
    .object({
      dampingKind: z.enum(DAMPING_KINDS),
      dampSmallestOnly: z.boolean(),
      nullSpaceEnabled: z.boolean(),
      guardPolicy: z.enum(GUARD_POLICIES),
      jointRateCapsDegPerS: z.array(uiNumber()),
      note: z.string().max(NOTE_MAX, `At most ${NOTE_MAX} characters`),
      // The damping fields of the schemes not chosen keep any value (they are hidden, and only the chosen
      // scheme's are sent); the chosen scheme's are checked below.
      ...Object.fromEntries(NUMERIC_PROFILE_FIELDS.map((f) => [f.uiKey, f.dampingKind ? z.union([z.number(), z.nan()]) : uiNumber(f.uiUnit)])),
    })
    .superRefine((values, ctx) => {
      const ui = values as ProfileFormValues;
      const emptyDamping = NUMERIC_PROFILE_FIELDS.filter((f) => f.dampingKind === ui.dampingKind && !Number.isFinite(ui[f.uiKey]));
      for (const f of emptyDamping) ctx.addIssue({ code: "custom", message: enterANumber(f.uiUnit), path: [f.uiKey] });
      const uiPathOf = (path: string) => uiKeyForProfilePath(path) ?? "root";
      addSchemaIssuesAtUiPaths(profileParamsSchema, profileCandidateOf(ui, jointKinds), ctx, uiPathOf, emptyDamping.map((f) => f.uiKey));
    }) as unknown as z.ZodType<ProfileFormValues, ProfileFormValues>;
  return z.codec(uiSchema, profileRequestSchema, {
    decode: (values) => ({ params: profileCandidateOf(values, jointKinds), note: values.note.trim() }),
    // The request schema has already checked `params` (encoding runs it first); parsing fills its defaults.
    encode: ({ params, note }) => profileFormValuesOf(profileParamsSchema.parse(params), note, jointKinds),
  });
}
