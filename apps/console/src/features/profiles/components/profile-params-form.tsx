import { useEffect, useMemo, type ReactNode } from "react";
import { useForm, useWatch, type FieldErrors, type Resolver } from "react-hook-form";
import {
  checkCeilings,
  DAMPING_KIND_LABELS,
  DAMPING_KINDS,
  GUARD_POLICIES,
  GUARD_POLICY_LABELS,
  JOINT_RATE_CAP_FIELD,
  NUMERIC_PROFILE_FIELDS,
  profileParamsFromUi,
  profileParamsSchema,
  profileParamsToUi,
  roundTo,
  uiKeyForProfilePath,
  type Arm,
  type Ceilings,
  type CeilingViolation,
  type JointKind,
  type NumericProfileField,
  type ProfileFieldGroup,
  type ProfileParams,
  type ProfileUiValues,
} from "@jogwright/shared";
import { Checkbox } from "../../../components/ui/checkbox.tsx";
import { Message } from "../../../components/ui/message.tsx";
import { NumberField } from "../../../components/ui/number-field.tsx";
import { SelectField } from "../../../components/ui/select-field.tsx";
import { TextAreaField } from "../../../components/ui/text-area-field.tsx";
import type { ApiIssue } from "../../../lib/api-client.ts";
import { jointKindsOf, ratedSpeedsOf } from "./arm-joints.ts";

/** The form state: every parameter in its UI unit (ProfileUiValues) plus the version note. */
export type ProfileFormValues = ProfileUiValues & { note: string };

export const ISO_CEILING_CITATION = "ISO 10218-1:2011, manual reduced speed: TCP ≤ 250 mm/s";

type FlatErrors = Record<string, string>;

function nest(flat: FlatErrors): FieldErrors<ProfileFormValues> {
  const out: Record<string, unknown> = {};
  for (const [key, message] of Object.entries(flat)) {
    const parts = key.split(".");
    let at = out;
    for (const part of parts.slice(0, -1)) {
      at[part] ??= {};
      at = at[part] as Record<string, unknown>;
    }
    at[parts[parts.length - 1]!] = { type: "validate", message };
  }
  return out as FieldErrors<ProfileFormValues>;
}

/**
 * Validation as you type: the UI values are converted to SI and checked with the shared
 * profileParamsSchema (the same schema the server applies); its issues are put back on the UI fields.
 * An empty or non-numeric input gets "enter a number" in its unit instead of the schema's message.
 */
export function validateProfileForm(values: ProfileFormValues, jointKinds: readonly JointKind[] | undefined): { params?: ProfileParams; errors: FlatErrors } {
  const errors: FlatErrors = {};
  values.jointRateCapsDegPerS.forEach((v, i) => {
    if (!Number.isFinite(Number(v))) errors[`${JOINT_RATE_CAP_FIELD.uiKey}.${i}`] = "Enter a number";
  });
  for (const field of NUMERIC_PROFILE_FIELDS) {
    if (field.dampingKind && field.dampingKind !== values.dampingKind) continue;
    if (!Number.isFinite(Number(values[field.uiKey]))) errors[field.uiKey] = `Enter a number in ${field.uiUnit}`;
  }
  if (values.note.length > 2000) errors.note = "At most 2000 characters";
  const parsed = profileParamsSchema.safeParse(profileParamsFromUi(values, jointKinds));
  if (!parsed.success) {
    for (const issue of parsed.error.issues) {
      const key = uiKeyForProfilePath(issue.path.map(String).join(".")) ?? "root";
      errors[key] ??= issue.message.charAt(0).toUpperCase() + issue.message.slice(1);
    }
  }
  return Object.keys(errors).length === 0 && parsed.success ? { params: parsed.data, errors } : { errors };
}

function ceilingViolationsOf(values: ProfileFormValues, ceilings: Ceilings | undefined, arm: Arm): CeilingViolation[] {
  if (!ceilings) return [];
  // The candidate may be incomplete while typing; NaN compares false, so a blank field raises no warning.
  const candidate = profileParamsFromUi(values, jointKindsOf(arm)) as unknown as ProfileParams;
  return checkCeilings(candidate, ceilings, ratedSpeedsOf(arm));
}

export interface ProfileParamsFormProps {
  /** A stable id for the form element, so a submit button outside it can name it. */
  formId: string;
  arm: Arm;
  ceilings: Ceilings | undefined;
  initialParams: ProfileParams;
  initialNote?: string;
  isReadOnly?: boolean;
  /** Issues from the server's 400 answer, placed on the fields they name. */
  serverIssues?: readonly ApiIssue[];
  onSave: (params: ProfileParams, note: string) => void;
  /** Rendered at the end, inside the form (buttons, server messages). */
  footer?: (state: { violations: CeilingViolation[]; isDirty: boolean }) => ReactNode;
}

export function ProfileParamsForm({ formId, arm, ceilings, initialParams, initialNote = "", isReadOnly, serverIssues, onSave, footer }: ProfileParamsFormProps) {
  const jointKinds = jointKindsOf(arm);
  const resolver = useMemo<Resolver<ProfileFormValues>>(
    () => async (values) => {
      const { params, errors } = validateProfileForm(values, jointKinds);
      return params ? { values, errors: {} } : { values: {}, errors: nest(errors) };
    },
    // jointKinds is derived from the arm, which does not change while the form is mounted.
    [arm.id],
  );
  const defaultValues = useMemo<ProfileFormValues>(() => ({ ...profileParamsToUi(initialParams, jointKinds), note: initialNote }), [initialParams, initialNote, arm.id]);
  const { register, handleSubmit, control, setError, formState } = useForm<ProfileFormValues>({ resolver, mode: "onChange", defaultValues });
  const values = useWatch({ control }) as ProfileFormValues;
  const violations = useMemo(() => ceilingViolationsOf(values, ceilings, arm), [values, ceilings, arm]);
  const warnings = useMemo(() => {
    const byKey: Record<string, string> = {};
    for (const v of violations) {
      const key = uiKeyForProfilePath(v.field);
      if (key) byKey[key] = v.message;
    }
    return byKey;
  }, [violations]);

  useEffect(() => {
    for (const issue of serverIssues ?? []) {
      const path = issue.path.replace(/^params\./, "");
      const key = uiKeyForProfilePath(path) ?? (path === "note" ? "note" : undefined);
      if (key) setError(key, { type: "server", message: issue.message });
    }
  }, [serverIssues, setError]);

  const errorOf = (key: string): string | undefined => {
    const parts = key.split(".");
    let at: unknown = formState.errors;
    for (const part of parts) at = at && typeof at === "object" ? (at as Record<string, unknown>)[part] : undefined;
    return at && typeof at === "object" && "message" in at ? String((at as { message?: string }).message) : undefined;
  };
  const rootError = errorOf("root");

  const submit = handleSubmit((v) => {
    const { params } = validateProfileForm(v, jointKinds);
    if (params) onSave(params, v.note.trim());
  });

  const field = (f: NumericProfileField, deps?: string[], extraHint?: ReactNode) => (
    <NumberField
      key={f.uiKey}
      label={f.label}
      unit={f.uiUnit}
      hint={extraHint ?? f.hint}
      error={errorOf(f.uiKey)}
      warning={warnings[f.uiKey]}
      disabled={isReadOnly}
      {...register(f.uiKey, { valueAsNumber: true, ...(deps ? { deps } : {}) })}
    />
  );
  const byKey = (uiKey: string) => NUMERIC_PROFILE_FIELDS.find((f) => f.uiKey === uiKey)!;
  const inGroup = (group: ProfileFieldGroup) => NUMERIC_PROFILE_FIELDS.filter((f) => f.group === group && !f.dampingKind);

  const fraction = ceilings?.jointSpeedFractionMax;
  const degPerS = (radPerS: number) => roundTo((radPerS * 180) / Math.PI, 1);

  return (
    <form id={formId} onSubmit={submit} noValidate className="flex flex-col gap-5" aria-label="Profile parameters">
      <Group title="Damping" description="Damped least squares near singularities: how much, and where.">
        <SelectField label="Damping scheme" disabled={isReadOnly} {...register("dampingKind", { deps: ["sigmaStopM"] })}>
          {DAMPING_KINDS.map((k) => (
            <option key={k} value={k}>
              {DAMPING_KIND_LABELS[k]}
            </option>
          ))}
        </SelectField>
        {NUMERIC_PROFILE_FIELDS.filter((f) => f.dampingKind === values.dampingKind).map((f) =>
          field(f, f.uiKey === "epsilonM" ? ["sigmaStopM"] : undefined, ceilingHint(f.uiKey, ceilings)),
        )}
        <div className="flex items-end pb-2 md:col-span-3">
          <Checkbox
            label="Numerical filtering: damp only the smallest singular direction (Maciejewski & Klein 1988)"
            disabled={isReadOnly}
            {...register("dampSmallestOnly")}
          />
        </div>
      </Group>

      <Group title="Speed caps" description="Motion is scaled as a whole so every cap holds and the tool keeps its direction.">
        {arm.model.joints.map((joint, i) => {
          const key = `${JOINT_RATE_CAP_FIELD.uiKey}.${i}`;
          const unit = joint.type === "prismatic" ? JOINT_RATE_CAP_FIELD.prismatic : JOINT_RATE_CAP_FIELD.revolute;
          const rated = joint.maxSpeed;
          const hint =
            rated === undefined
              ? "No rated speed on this arm."
              : joint.type === "revolute"
                ? `Rated ${degPerS(rated)} deg/s${fraction !== undefined ? ` · ceiling ${degPerS(rated * fraction)} deg/s (${roundTo(fraction * 100, 1)} %)` : ""}`
                : `Rated ${roundTo(rated * 1000, 1)} mm/s`;
          return (
            <NumberField
              key={key}
              label={JOINT_RATE_CAP_FIELD.label(i)}
              unit={unit.uiUnit}
              hint={hint}
              error={errorOf(key)}
              warning={warnings[key]}
              disabled={isReadOnly}
              {...register(key, { valueAsNumber: true })}
            />
          );
        })}
        {inGroup("Speed caps").map((f) => field(f, undefined, ceilingHint(f.uiKey, ceilings)))}
      </Group>

      <Group title="Joint limits">{inGroup("Joint limits").map((f) => field(f))}</Group>

      <Group title="Singularity guard" description="Damp through, or stop before the singular region until the operator acknowledges.">
        <SelectField
          label="Guard policy"
          disabled={isReadOnly}
          warning={warnings.guardPolicy}
          hint={ceilings ? `Allowed at this site: ${ceilings.allowedGuardPolicies.map((p) => GUARD_POLICY_LABELS[p]).join(", ")}` : undefined}
          {...register("guardPolicy")}
        >
          {GUARD_POLICIES.map((p) => (
            <option key={p} value={p}>
              {GUARD_POLICY_LABELS[p]}
            </option>
          ))}
        </SelectField>
        {inGroup("Singularity guard").map((f) => field(f))}
      </Group>

      <Group title="Input" description="Shaping of the operator's input and the watchdog.">
        {inGroup("Input").map((f) => field(f, undefined, f.uiKey === "watchdogMs" && ceilings ? `${f.hint} Site ceiling ${ceilings.watchdogMaxMs} ms.` : undefined))}
      </Group>

      <Group title="Override">
        {field(byKey("overrideDefaultPercent"))}
        {field(byKey("overrideMaxPercent"), ["overrideDefaultPercent"])}
      </Group>

      <Group title="Loop">
        {field(byKey("tickRateHz"), ["driftCorrectionGainPerS"])}
        {field(byKey("driftCorrectionGainPerS"))}
      </Group>

      <TextAreaField
        label="Note"
        hint="What changed and why; shown in the version history and to the reviewer."
        disabled={isReadOnly}
        error={errorOf("note")}
        {...register("note")}
      />

      {rootError ? <Message tone="stop">{rootError}</Message> : null}
      {violations.length > 0 ? (
        <Message tone="warn" title={`Above ${violations.length === 1 ? "a site ceiling" : `${violations.length} site ceilings`}`}>
          <ul className="list-disc pl-4" data-testid="ceiling-violations">
            {violations.map((v) => (
              <li key={v.field}>{v.message.charAt(0).toUpperCase() + v.message.slice(1)}.</li>
            ))}
          </ul>
          <p className="mt-1">It can be saved as a draft, but cannot be submitted for review or approved.</p>
        </Message>
      ) : null}
      {footer?.({ violations, isDirty: formState.isDirty })}
    </form>
  );
}

function ceilingHint(uiKey: string, ceilings: Ceilings | undefined): ReactNode | undefined {
  if (!ceilings) return undefined;
  if (uiKey === "tcpLinearCapMmPerS") {
    return (
      <>
        Site ceiling {roundTo(ceilings.tcpLinearMaxMPerS * 1000, 1)} mm/s. Reference: {ISO_CEILING_CITATION}.
      </>
    );
  }
  if (uiKey === "tcpAngularCapDegPerS") return `Site ceiling ${roundTo((ceilings.tcpAngularMaxRadPerS * 180) / Math.PI, 1)} deg/s.`;
  if (uiKey === "lambdaM" || uiKey === "lambdaMaxM" || uiKey === "lambda0M") return `Site minimum at the singularity ${ceilings.lambdaMaxMinM} m.`;
  return undefined;
}

function Group({ title, description, children }: { title: string; description?: string; children: ReactNode }) {
  return (
    <fieldset className="rounded-lg border border-ink-700 p-4">
      <legend className="px-1 text-base font-bold">{title}</legend>
      {description ? <p className="-mt-1 mb-3 text-sm text-ink-300">{description}</p> : null}
      <div className="grid gap-4 md:grid-cols-3">{children}</div>
    </fieldset>
  );
}
