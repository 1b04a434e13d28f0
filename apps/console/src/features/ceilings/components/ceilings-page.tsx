import { useMemo, useState, type ReactNode } from "react";
import { Link } from "react-router";
import { useForm } from "react-hook-form";
import { zodResolver } from "@hookform/resolvers/zod";
import { Save } from "lucide-react";
import { GUARD_POLICIES, GUARD_POLICY_LABELS, labelForProfilePath, type CeilingsRecord, type FlaggedVersion } from "@jogwright/shared";
import { PageHeader } from "../../../components/layout/page-header.tsx";
import { Button, SubmitButton } from "../../../components/ui/button.tsx";
import { Card } from "../../../components/ui/card.tsx";
import { FormFooter, SCROLL_ABOVE_FORM_FOOTER } from "../../../components/ui/form-footer.tsx";
import { cn } from "../../../lib/cn.ts";
import { Checkbox } from "../../../components/ui/checkbox.tsx";
import { Message } from "../../../components/ui/message.tsx";
import { SelectField } from "../../../components/ui/select-field.tsx";
import { NumberField } from "../../../components/ui/number-field.tsx";
import { TextAreaField } from "../../../components/ui/text-area-field.tsx";
import { isApiRequestError } from "../../../lib/api-client.ts";
import { formatDateTime } from "../../../lib/format.ts";
import { applyServerIssues } from "../../../lib/server-issues.ts";
import { ISO_CEILING_CITATION } from "../../../components/profiles/ceiling-citation.ts";
import { useCeilings, useFlaggedVersions } from "../../../lib/queries/ceilings.ts";
import { ceilingsFormCodec, ceilingsFormValuesOf, uiFieldOfCeilingsPath, type CeilingsFormOutput, type CeilingsFormValues } from "../forms/ceilings-form-codec.ts";
import { useUpdateCeilings } from "../hooks/use-ceilings.ts";
import { QueryStatus } from "../../../components/ui/query-status.tsx";

/** Server issues name request paths ("ceilings.tcpLinearMaxMPerS", "note"); the form shows them on its UI fields. */
/** The numeric ceilings as the form shows them, in this order: the form field (UI units), its label, unit and hint. */
const NUMBER_CEILINGS: { field: NumberCeilingField; label: string; unit: string; hint?: ReactNode }[] = [
  { field: "tcpLinearMaxMmPerS", label: "TCP linear speed, at most", unit: "mm/s", hint: <>Default 250 mm/s. Reference: {ISO_CEILING_CITATION}.</> },
  { field: "tcpAngularMaxDegPerS", label: "TCP angular speed, at most", unit: "deg/s" },
  { field: "jointSpeedFractionMaxPercent", label: "Joint rate cap, at most", unit: "%", hint: "Of each joint's rated speed (the arm's maxSpeed)." },
  { field: "watchdogMaxMs", label: "Input watchdog, at most", unit: "ms", hint: "The longest time without input before a controlled stop." },
  {
    field: "stoppingDistanceMaxMm",
    label: "Controlled stop, at most",
    unit: "mm",
    hint: "From a version's top TCP speed (linear cap at its maximum override) at its linear deceleration, v²/2a. Default 50 mm: common practice, no source.",
  },
  {
    field: "decelerationMinMPerS2",
    label: "Linear deceleration, at least",
    unit: "m/s²",
    hint: "The smallest linear acceleration limit a version may use; it also sets the controlled-stop ramp. Default 0.5 m/s²: common practice, no source.",
  },
  { field: "lambdaMaxMinMm", label: "Damping at the singularity, at least", unit: "mm", hint: "The smallest λmax (or λ0, or fixed λ) a profile may use near singularities." },
];
type NumberCeilingField = "tcpLinearMaxMmPerS" | "tcpAngularMaxDegPerS" | "jointSpeedFractionMaxPercent" | "watchdogMaxMs" | "stoppingDistanceMaxMm" | "decelerationMinMPerS2" | "lambdaMaxMinMm";

const fieldOfServerIssue = (path: string): keyof CeilingsFormValues | undefined =>
  path === "note" ? "note" : path.startsWith("ceilings.") ? uiFieldOfCeilingsPath(path.slice("ceilings.".length)) : undefined;

export function CeilingsPage({ canEdit }: { canEdit: boolean }) {
  return (
    <>
      <PageHeader
        title="Site ceilings"
        description="Limits no profile version may exceed. A version above a ceiling cannot be submitted or approved; lowering a ceiling marks approved versions above it, which then cannot be driven until a compliant version is approved."
      />
      <CurrentCeilings canEdit={canEdit} />
      <FlaggedVersionsCard canReconfirm={canEdit} />
    </>
  );
}

/** The ceilings in force, loaded here (the flagged versions' card loads its own list): the editor once they are in. */
function CurrentCeilings({ canEdit }: { canEdit: boolean }) {
  const record = useCeilings();
  return (
    <>
      <QueryStatus query={record} loading="Loading the ceilings…" failed="Could not load the ceilings" />
      {record.data ? <CeilingsEditor latest={record.data} canEdit={canEdit} /> : null}
    </>
  );
}

/**
 * Edits the revision it was loaded with; a background refetch never replaces what is being typed. A save
 * over a newer revision is refused by the server (409 stale_parent) and the values stay in the form.
 */
function CeilingsEditor({ latest, canEdit }: { latest: CeilingsRecord; canEdit: boolean }) {
  const update = useUpdateCeilings();
  const [loaded, setLoaded] = useState(latest);
  const [flagged, setFlagged] = useState<FlaggedVersion[] | null>(null);
  // Only the first render counts for react-hook-form; later revisions arrive through reset().
  const defaultValues = useMemo(() => ceilingsFormValuesOf(loaded.ceilings), [loaded]);
  const { register, handleSubmit, formState, reset, setError } = useForm<CeilingsFormValues, unknown, CeilingsFormOutput>({
    resolver: zodResolver(ceilingsFormCodec),
    mode: "onChange",
    defaultValues,
  });
  const [unplacedIssues, setUnplacedIssues] = useState<string[]>([]);
  const errors = formState.errors;
  const isStale = isApiRequestError(update.error) && update.error.code === "stale_parent";

  // The resolver decoded the UI values: `ceilings` is SI and checked with the shared ceilingsSchema.
  const onSubmit = handleSubmit(({ ceilings, note }) => {
    setFlagged(null);
    setUnplacedIssues([]);
    update.mutate({ revision: loaded.revision, ceilings, note }, {
      onSuccess: (r) => {
        setLoaded(r.record);
        reset(ceilingsFormValuesOf(r.record.ceilings));
        setFlagged(r.flaggedVersions);
      },
      onError: (error) => setUnplacedIssues(applyServerIssues(error, fieldOfServerIssue, setError)),
    });
  });

  return (
    <div className="flex max-w-4xl flex-col gap-6">
      <Card
        title={canEdit ? "Edit the ceilings" : "Ceilings in force"}
        description={
          <>
            Revision <span className="num text-ink-100">{loaded.revision}</span>
            {loaded.updatedByName ? (
              <>
                , set by <strong className="text-ink-100">{loaded.updatedByName}</strong> on <span className="num">{formatDateTime(loaded.updatedAt)}</span>
              </>
            ) : (
              " (site defaults)"
            )}
            .{canEdit ? "" : " Only a safety officer can change them."}
          </>
        }
      >
        <form onSubmit={onSubmit} noValidate className={cn("flex flex-col gap-5", SCROLL_ABOVE_FORM_FOOTER)} aria-label="Site ceilings">
          <div className="grid gap-4 md:grid-cols-2">
            {NUMBER_CEILINGS.map(({ field, label, unit, hint }) => (
              <NumberField
                key={field}
                label={label}
                unit={unit}
                hint={hint}
                disabled={!canEdit}
                error={errors[field]?.message}
                {...register(field, { valueAsNumber: true })}
              />
            ))}
            <SelectField
              label="Evidence before submission"
              hint="The built-in trials of the arm, run with the version (the server runs any the engineer did not attach): none stalled (a stop-before hold counts as finished), none stopping farther than the stopping-distance ceiling."
              disabled={!canEdit}
              error={errors.evidenceRequired?.message}
              {...register("evidenceRequired")}
            >
              <option value="builtin-trials">Built-in trials, all finished, none above a ceiling</option>
              <option value="none">None required</option>
            </SelectField>
            <fieldset className="flex flex-col gap-2" aria-describedby={errors.allowedGuardPolicies ? "guard-policies-error" : undefined}>
              <legend className="mb-1 text-sm font-semibold">Allowed guard policies</legend>
              {GUARD_POLICIES.map((p) => (
                <Checkbox key={p} label={GUARD_POLICY_LABELS[p]} value={p} disabled={!canEdit} {...register("allowedGuardPolicies")} />
              ))}
              {errors.allowedGuardPolicies ? (
                <p id="guard-policies-error" className="text-sm text-stop-400">
                  {errors.allowedGuardPolicies.message}
                </p>
              ) : null}
            </fieldset>
          </div>
          {canEdit ? (
            <>
              <TextAreaField label="Note" hint="Why the ceilings change; kept in the audit trail." error={errors.note?.message} {...register("note")} />
              {errors.root ? <Message tone="stop">{errors.root.message}</Message> : null}
              {/* The outcome of Save shows beside the button, in view, with focus moved to it (issue 13, item 10). */}
              <FormFooter
                feedbackKey={update.isIdle || update.isPending ? null : `${update.status}-${update.submittedAt}`}
                feedback={
                  isStale ? (
                    <Message tone="stop" title="Not saved: the ceilings changed since you loaded them">
                      <p>{update.error?.message}</p>
                      <p>Nothing was overwritten and your values are still in the form. Load the current ceilings, then make your change again.</p>
                      <Button
                        size="sm"
                        className="mt-2"
                        onClick={() => {
                          setLoaded(latest);
                          reset(ceilingsFormValuesOf(latest.ceilings));
                          update.reset();
                        }}
                      >
                        Load the current ceilings (revision {latest.revision}, discards my values)
                      </Button>
                    </Message>
                  ) : update.isError ? (
                    <Message tone="stop" title="Not saved">
                      {update.error.message}
                      {unplacedIssues.length > 0 ? (
                        <ul className="mt-1 list-disc pl-4">
                          {unplacedIssues.map((m) => (
                            <li key={m}>{m}</li>
                          ))}
                        </ul>
                      ) : null}
                    </Message>
                  ) : flagged ? (
                    flagged.length === 0 ? (
                      <Message tone="ok" title="Ceilings saved">
                        No approved version is above the new ceilings.
                      </Message>
                    ) : (
                      <Message tone="warn" title={`Ceilings saved — ${flagged.length} approved ${flagged.length === 1 ? "version is" : "versions are"} now above them`}>
                        <p>These cannot be driven until a compliant version is approved or a safety officer re-confirms them under the ceilings in force:</p>
                        <ul className="list-disc pl-4" data-testid="flagged-versions">
                          {flagged.map((v) => (
                            <li key={v.versionId}>
                              <Link to={`/profiles/${v.profileId}`} className="text-iris-300 hover:underline">
                                {v.label}
                              </Link>{" "}
                              <span className="text-ink-300">(operator {v.operatorName})</span>
                            </li>
                          ))}
                        </ul>
                      </Message>
                    )
                  ) : null
                }
              >
                <SubmitButton icon={Save} isPending={update.isPending} pendingLabel="Saving…">
                  Save ceilings
                </SubmitButton>
              </FormFooter>
            </>
          ) : null}
        </form>
      </Card>
    </div>
  );
}

/**
 * Approved versions flagged above the ceilings now, named as people know them ("Olena — pack opening
 * v5"), with whether each complies with the ceilings in force; a safety officer re-confirms one that does
 * on its review page (a comment, audited, mailed), or a compliant successor is approved.
 */
function FlaggedVersionsCard({ canReconfirm }: { canReconfirm: boolean }) {
  const flagged = useFlaggedVersions();
  return (
    <div className="mt-6 max-w-4xl">
      <Card
        title="Flagged versions"
        description="Approved versions the ceilings were lowered below. Their operators cannot drive them until a compliant version is approved or a safety officer re-confirms one that complies with the ceilings in force now."
      >
        <QueryStatus query={flagged} loading="Loading the flagged versions…" failed="Could not load the flagged versions" />
        {flagged.data ? (
          flagged.data.length === 0 ? (
            <p className="text-sm text-ink-300">No approved version is flagged.</p>
          ) : (
            <ul className="flex flex-col gap-3" data-testid="flagged-list">
              {flagged.data.map((v) => (
                <li key={v.versionId} className="flex flex-wrap items-start justify-between gap-3 border-b border-ink-700 pb-3 last:border-b-0" data-version-id={v.versionId}>
                  <div className="flex flex-col gap-1 text-sm">
                    <Link to={`/profiles/${v.profileId}`} className="font-semibold text-iris-300 hover:underline">
                      {v.label}
                    </Link>
                    <span className="text-ink-300">
                      Operator {v.operatorName} · flagged {v.events.filter((e) => e.kind === "flag").length}×
                      {v.events.length ? <span className="num"> · last {formatDateTime(v.events[v.events.length - 1]!.at)}</span> : null}
                    </span>
                    {v.compliesNow ? (
                      <span className="text-ok-400">Complies with the ceilings in force now.</span>
                    ) : (
                      <span className="text-warn-400">Still above: {v.violations.map((x) => labelForProfilePath(x.field)).join(", ")}.</span>
                    )}
                  </div>
                  {canReconfirm && v.compliesNow ? (
                    <Link
                      to={`/reviews/${v.versionId}`}
                      className="inline-flex h-9 items-center rounded-md border border-ink-600 px-3 text-sm font-semibold text-iris-300 hover:bg-ink-800"
                      aria-label={`Re-confirm ${v.label}`}
                    >
                      Re-confirm…
                    </Link>
                  ) : null}
                </li>
              ))}
            </ul>
          )
        ) : null}
      </Card>
    </div>
  );
}
