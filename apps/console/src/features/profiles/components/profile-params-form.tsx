import { useEffect, useMemo, type ReactNode } from "react";
import { useForm, useWatch } from "react-hook-form";
import { zodResolver } from "@hookform/resolvers/zod";
import {
  checkCeilings,
  controlledStopDistanceM,
  DAMPING_KIND_LABELS,
  DAMPING_KINDS,
  GUARD_POLICIES,
  GUARD_POLICY_LABELS,
  JOINT_RATE_CAP_FIELD,
  NUMERIC_PROFILE_FIELDS,
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
  type ProfileWarning,
} from "@jogwright/shared";
import { ISO_CEILING_CITATION } from "../../../components/profiles/ceiling-citation.ts";
import { Checkbox } from "../../../components/ui/checkbox.tsx";
import { SCROLL_ABOVE_FORM_FOOTER } from "../../../components/ui/form-footer.tsx";
import { cn } from "../../../lib/cn.ts";
import { Message } from "../../../components/ui/message.tsx";
import { NumberField } from "../../../components/ui/number-field.tsx";
import { SelectField } from "../../../components/ui/select-field.tsx";
import { TextAreaField } from "../../../components/ui/text-area-field.tsx";
import { jointKindsOf, ratedSpeedsOf } from "../../../lib/arm-joints.ts";
import { asSentence } from "../../../lib/format.ts";
import { applyServerIssues } from "../../../lib/server-issues.ts";
import { profileCandidateOf, profileFormCodec, profileFormValuesOf, type ProfileFormOutput, type ProfileFormValues } from "../forms/profile-form-codec.ts";

/** The values as SI parameters; may be incomplete while typing (NaN compares false, so a blank field raises nothing). */
const candidateOf = (values: ProfileFormValues, jointKinds: readonly JointKind[] | undefined) => profileCandidateOf(values, jointKinds) as unknown as ProfileParams;

/**
 * The form field a server issue belongs to: `params.<SI path>` → its UI field ("params.tcpLinearCapMPerS" →
 * "tcpLinearCapMmPerS"), `note` → the note.
 */
const fieldOfServerIssue = (path: string): string | undefined =>
  path === "note" ? "note" : path.startsWith("params.") ? uiKeyForProfilePath(path.slice("params.".length)) : undefined;

function ceilingViolationsOf(values: ProfileFormValues, ceilings: Ceilings | undefined, arm: Arm): CeilingViolation[] {
  if (!ceilings) return [];
  return checkCeilings(candidateOf(values, jointKindsOf(arm)), ceilings, ratedSpeedsOf(arm));
}

export interface ProfileParamsFormProps {
  /** A stable id for the form element, so a submit button outside it can name it. */
  formId: string;
  arm: Arm;
  ceilings: Ceilings | undefined;
  initialParams: ProfileParams;
  initialNote?: string;
  isReadOnly?: boolean;
  /** The save's error: a 400's issues are placed on the fields they name (applyServerIssues). */
  serverError?: unknown;
  onSave: (params: ProfileParams, note: string) => void;
  /** Rendered at the end, inside the form (buttons, server messages). */
  footer?: (state: { violations: CeilingViolation[]; isDirty: boolean }) => ReactNode;
}

export function ProfileParamsForm({ formId, arm, ceilings, initialParams, initialNote = "", isReadOnly, serverError, onSave, footer }: ProfileParamsFormProps) {
  const jointKinds = useMemo(() => jointKindsOf(arm), [arm]);
  // Validation as you type: the codec converts the UI values to SI and checks them with the shared
  // profileParamsSchema (the server's), its issues on the UI fields; handleSubmit receives the SI values.
  const resolver = useMemo(() => zodResolver(profileFormCodec(jointKinds)), [jointKinds]);
  // The plain conversion, not the codec's encode: a stored value that rounds past a bound in its UI unit
  // shows with its error instead of failing the page.
  const defaultValues = useMemo(() => profileFormValuesOf(initialParams, initialNote, jointKinds), [initialParams, initialNote, jointKinds]);
  const { register, handleSubmit, control, setError, formState } = useForm<ProfileFormValues, unknown, ProfileFormOutput>({ resolver, mode: "onChange", defaultValues });
  const values = useWatch({ control }) as ProfileFormValues;
  const violations = useMemo(() => ceilingViolationsOf(values, ceilings, arm), [values, ceilings, arm]);
  const advisories = useMemo<ProfileWarning[]>(() => profileWarnings(candidateOf(values, jointKinds)), [values, jointKinds]);
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
    const unplaced = applyServerIssues<ProfileFormValues>(serverError, fieldOfServerIssue, setError);
    if (unplaced.length > 0) setError("root.server", { type: "server", message: unplaced.join(" · ") });
  }, [serverError, setError]);

  const errorOf = (key: string): string | undefined => {
    const parts = key.split(".");
    let at: unknown = formState.errors;
    for (const part of parts) at = at && typeof at === "object" ? (at as Record<string, unknown>)[part] : undefined;
    return at && typeof at === "object" && "message" in at ? String((at as { message?: string }).message) : undefined;
  };
  const rootError = formState.errors.root?.message ?? formState.errors.root?.server?.message;

  const submit = handleSubmit(({ params, note }) => onSave(params, note));

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
    <form id={formId} onSubmit={submit} noValidate className={cn("flex flex-col gap-5", SCROLL_ABOVE_FORM_FOOTER)} aria-label="Profile parameters">
      <Group title="Damping" description="Damped least squares near singularities: how much, and where.">
        <SelectField label="Damping scheme" disabled={isReadOnly} {...register("dampingKind", { deps: ["sigmaStopMm"] })}>
          {DAMPING_KINDS.map((k) => (
            <option key={k} value={k}>
              {DAMPING_KIND_LABELS[k]}
            </option>
          ))}
        </SelectField>
        {NUMERIC_PROFILE_FIELDS.filter((f) => f.dampingKind === values.dampingKind).map((f) =>
          field(f, f.uiKey === "epsilonMm" ? ["sigmaStopMm"] : undefined, ceilingHint(f.uiKey, ceilings)),
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
              <li key={v.field}>{asSentence(v.message)}</li>
            ))}
          </ul>
          <p className="mt-1">It can be saved as a draft, but cannot be submitted for review or approved.</p>
        </Message>
      ) : null}
      {advisories.length > 0 ? (
        <Message tone="warn" title={advisories.length === 1 ? "Worth a second look" : `${advisories.length} settings worth a second look`}>
          <ul className="list-disc pl-4" data-testid="profile-warnings">
            {advisories.map((w) => (
              <li key={w.field}>{asSentence(w.message)}</li>
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
  if (uiKey === "lambdaMm" || uiKey === "lambdaMaxMm" || uiKey === "lambda0Mm") return `Site minimum at the singularity ${roundTo(ceilings.lambdaMaxMinM * 1000, 1)} mm.`;
  return undefined;
}

/** The controlled stop the ramp gives from the top speed (v²/2a, derived), against the site's stop ceilings. */
function stopHint(values: ProfileFormValues, arm: Arm, ceilings: Ceilings | undefined): ReactNode | undefined {
  const p = candidateOf(values, jointKindsOf(arm));
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
