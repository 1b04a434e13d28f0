import { useEffect, useMemo, type ReactNode } from "react";
import { useForm, useWatch, type FieldErrors, type Resolver } from "react-hook-form";
import {
  checkCeilings,
  controlledStopDistanceM,
  DAMPING_KIND_LABELS,
  DAMPING_KINDS,
  GUARD_POLICIES,
  GUARD_POLICY_LABELS,
  JOINT_RATE_CAP_FIELD,
  NUMERIC_PROFILE_FIELDS,
  profileParamsFromUi,
  profileParamsSchema,
  profileParamsToUi,
  profileWarnings,
  roundTo,
  topTcpSpeedMPerS,
  uiKeyForProfilePath,
  type Arm,
  type Ceilings,
  type CeilingViolation,
  type JointKind,
  type NumericProfileField,
  type ProfileFieldGroup,
  type ProfileParams,
  type ProfileUiValues,
  type ProfileWarning,
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

/**
 * Where the 250 mm/s figure comes from. The 2011 edition was replaced in February 2025; the clause number is
 * from memory, not verified.
 */
export const ISO_CEILING_CITATION =
  "ISO 10218-1:2011, manual reduced speed: TCP ≤ 250 mm/s (figure confirmed in secondary sources; clause number from memory). That edition was replaced in February 2025 by ISO 10218-1:2025, which keeps a reduced-speed mode";

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

/** The values as SI parameters; may be incomplete while typing (NaN compares false, so a blank field raises nothing). */
const candidateOf = (values: ProfileFormValues, arm: Arm) => profileParamsFromUi(values, jointKindsOf(arm)) as unknown as ProfileParams;

function ceilingViolationsOf(values: ProfileFormValues, ceilings: Ceilings | undefined, arm: Arm): CeilingViolation[] {
  if (!ceilings) return [];
  return checkCeilings(candidateOf(values, arm), ceilings, ratedSpeedsOf(arm));
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
  const advisories = useMemo<ProfileWarning[]>(() => profileWarnings(candidateOf(values, arm)), [values, arm]);
  const warnings = useMemo(() => {
    const byKey: Record<string, string> = {};
    // A ceiling breach outranks an advisory on the same field.
    for (const w of [...advisories, ...violations]) {
      const key = uiKeyForProfilePath(w.field);
      if (key) byKey[key] = w.message;
    }
    return byKey;
  }, [violations, advisories]);

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
            label="Numerical filtering: damp only the directions whose σ is below ε (Maciejewski & Klein 1988)"
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
        {inGroup("Input").map((f) =>
          field(
            f,
            undefined,
            f.uiKey === "watchdogMs" && ceilings
              ? `${f.hint} Site ceiling ${ceilings.watchdogMaxMs} ms.`
              : f.uiKey === "linearAccelMmPerS2"
                ? stopHint(values, arm, ceilings)
                : undefined,
          ),
        )}
      </Group>

      <Group title="Override">
        {field(byKey("overrideDefaultPercent"))}
        {field(byKey("overrideMaxPercent"), ["overrideDefaultPercent"])}
      </Group>

      <Group title="Loop">
        {field(byKey("tickRateHz"), ["driftCorrectionGainPerS"])}
        {field(byKey("driftCorrectionGainPerS"))}
        {field(byKey("driftReanchorMm"))}
      </Group>

      <Group
        title="Redundancy"
        description={
          arm.model.joints.length > 6
            ? "Spare motion of a redundant arm, projected into the null space so the tool does not feel it."
            : `This arm has ${arm.model.joints.length} joints and no spare motion: these settings have no effect on it.`
        }
      >
        <div className="flex items-end pb-2">
          <Checkbox label="Null-space term: keep joints away from their limits (Liégeois 1977)" disabled={isReadOnly} {...register("nullSpaceEnabled")} />
        </div>
        {field(byKey("nullSpaceGainPerS"))}
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
      {advisories.length > 0 ? (
        <Message tone="warn" title={advisories.length === 1 ? "Worth a second look" : `${advisories.length} settings worth a second look`}>
          <ul className="list-disc pl-4" data-testid="profile-warnings">
            {advisories.map((w) => (
              <li key={w.field}>{w.message.charAt(0).toUpperCase() + w.message.slice(1)}.</li>
            ))}
          </ul>
          <p className="mt-1">A warning, not a refusal: the version can still be submitted and approved.</p>
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

/** The controlled stop the ramp gives from the top speed (v²/2a, derived), against the site's stop ceilings. */
function stopHint(values: ProfileFormValues, arm: Arm, ceilings: Ceilings | undefined): ReactNode | undefined {
  const p = candidateOf(values, arm);
  const stopM = controlledStopDistanceM(topTcpSpeedMPerS(p), p.shaping?.linearAccelMPerS2 ?? Number.NaN);
  const stop = Number.isFinite(stopM) ? `Also the controlled-stop ramp: from the top speed it stops in ${roundTo(stopM * 1000, 1)} mm (v²/2a).` : "Also the controlled-stop ramp.";
  if (!ceilings) return stop;
  return `${stop} Site: stop at most ${roundTo(ceilings.stoppingDistanceMaxM * 1000, 1)} mm, deceleration at least ${roundTo(ceilings.decelerationMinMPerS2 * 1000, 0)} mm/s² (${roundTo(ceilings.decelerationMinMPerS2, 3)} m/s²).`;
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
