import { useMemo, useState } from "react";
import { useMutation, useQuery } from "@tanstack/react-query";
import { FlaskConical, Plus } from "lucide-react";
import {
  label, profileParamsSchema, withSweepParameter,
  type ProfileParams, type ProfileVersion, type SweepParameter, type TrialRef, type TrialRun,
} from "@jogwright/shared";
import { PageHeader } from "../../../components/layout/page-header.tsx";
import { Button } from "../../../components/ui/button.tsx";
import { Card } from "../../../components/ui/card.tsx";
import { Checkbox } from "../../../components/ui/checkbox.tsx";
import { FailureMessage } from "../../../components/ui/message.tsx";
import { QueryStatus } from "../../../components/ui/query-status.tsx";
import { SelectField } from "../../../components/ui/select-field.tsx";
import { formatDateTime } from "../../../lib/format.ts";
import { profileDetailQueryOptions, useProfiles } from "../../../lib/queries/profiles.ts";
import { recordingListQueryOptions } from "../../../lib/queries/recordings.ts";
import { useArms } from "../../../lib/queries/arms.ts";
import { useCurrentUser } from "../../../lib/session.ts";
import { armTrialsQueryOptions, runTrials } from "../api/bench-api.ts";
import { RunComparison } from "./run-comparison.tsx";
import { EditsFields } from "./edits-fields.tsx";
import { SingularityMapPanel } from "./singularity-map.tsx";
import { SweepPanel } from "./sweep-panel.tsx";
import { TrialEditorDialog } from "./trial-editor.tsx";

/**
 * The tuning bench: pick a profile, one version (or two to compare), and trials; run them offline through
 * the same motion gate and control step as live jogging; read the metrics side by side and the plots; sweep
 * a parameter and make a draft from a point of the trade-off. Simulation only.
 */
export function BenchPage() {
  const user = useCurrentUser();
  const isEngineer = user.roles.includes("engineer");
  const profiles = useProfiles();
  const arms = useArms();
  const [profileId, setProfileId] = useState<number | null>(null);
  const detail = useQuery(profileDetailQueryOptions(profileId));
  const armId = detail.data?.profile.armId ?? null;
  const trials = useQuery(armTrialsQueryOptions(armId));
  const arm = arms.data?.find((x) => x.id === armId);
  const [editorOpen, setEditorOpen] = useState(false);
  const [versionA, setVersionA] = useState<number | null>(null);
  const [versionB, setVersionB] = useState<number | null>(null);
  const [picked, setPicked] = useState<Set<string>>(new Set(["builtin:wrist-line", "builtin:wrist-near-miss-3mm"]));

  const versions = useMemo(() => [...(detail.data?.versions ?? [])].sort((a, b) => b.number - a.number), [detail.data]);
  const a = versions.find((v) => v.id === versionA) ?? versions[0] ?? null;
  const [compareEdits, setCompareEdits] = useState(false);
  const b = compareEdits ? null : (versions.find((v) => v.id === versionB) ?? null);
  const [edits, setEdits] = useState<Partial<Record<SweepParameter, number>>>({});
  // Unsaved edits: version A's parameters with the edited values, checked with the shared schema.
  const editedParams = useMemo(() => {
    if (!a) return null;
    let p: ProfileParams = a.params;
    try {
      for (const [k, v] of Object.entries(edits)) p = withSweepParameter(p, k as SweepParameter, v);
    } catch {
      return null;
    }
    const parsed = profileParamsSchema.safeParse(p);
    return parsed.success ? parsed.data : null;
  }, [a, edits]);

  // Recorded live sessions on this profile's arm: their operator's input replayed with the version(s).
  const recordings = useQuery({ ...recordingListQueryOptions(), enabled: armId !== null });
  const armRecordings = (recordings.data ?? []).filter((r) => r.armId === armId && r.endedAt !== null).slice(0, 50);
  const [replayId, setReplayId] = useState<number | null>(null);

  // The ticked trials of this arm, in the list's order (a key ticked for another profile's arm is ignored).
  const chosenTrials: TrialRef[] = [
    ...(trials.data?.builtin ?? []).filter((t) => picked.has(`builtin:${t.kind}`)).map((t) => ({ kind: "builtin" as const, builtin: t.kind })),
    ...(trials.data?.custom ?? []).filter((t) => picked.has(`custom:${t.id}`)).map((t) => ({ kind: "custom" as const, trialId: t.id })),
  ];
  const chosen: TrialRef[] = [...chosenTrials, ...(replayId !== null && armRecordings.some((r) => r.id === replayId) ? [{ kind: "replay" as const, recordingId: replayId }] : [])];

  // The results name the versions that ran (the pickers may have moved on since).
  const run = useMutation({
    mutationFn: async (input: { a: ProfileVersion; b: ProfileVersion | "edits" | null; edits: ProfileParams | null; trials: TrialRef[] }): Promise<{ a: RunSet; b: RunSet | null }> => {
      const ran = (v: ProfileVersion) => runTrials({ source: { kind: "version", versionId: v.id }, trials: input.trials }).then((runs) => ({ label: `v${v.number}`, runs }));
      const edited = (params: ProfileParams) =>
        runTrials({ source: { kind: "edits", profileId: input.a.profileId, params }, trials: input.trials }).then((runs) => ({ label: `v${input.a.number} edited`, runs }));
      const [ra, rb] = await Promise.all([
        ran(input.a),
        input.b === "edits" ? edited(input.edits!) : input.b ? ran(input.b) : Promise.resolve(null),
      ]);
      return { a: ra, b: rb };
    },
  });

  const toggle = (key: string) =>
    setPicked((s) => {
      const next = new Set(s);
      if (next.has(key)) next.delete(key);
      else next.add(key);
      return next;
    });

  return (
    <>
      <PageHeader
        title="Tuning bench"
        description="Scripted trials through the same motion gate and control step as live jogging, run offline on the server. Simulation only: the evidence here is not a safety sign-off."
      />
      <div className="flex flex-col gap-6">
        <Card title="What to run">
          <QueryStatus query={profiles} loading="Loading profiles…" failed="Could not load the profiles" />
          <div className="grid gap-4 md:grid-cols-3">
            <SelectField
              label="Profile"
              value={profileId ?? ""}
              onChange={(e) => {
                setProfileId(e.target.value ? Number(e.target.value) : null);
                setVersionA(null);
                setVersionB(null);
                run.reset();
              }}
            >
              <option value="">Choose a profile</option>
              {profiles.data?.map((p) => (
                <option key={p.id} value={p.id}>
                  {p.name} — {p.operatorName}, {p.armName}
                </option>
              ))}
            </SelectField>
            <SelectField label="Version" value={a?.id ?? ""} disabled={!versions.length} onChange={(e) => setVersionA(Number(e.target.value))}>
              {versions.map((v) => (
                <option key={v.id} value={v.id}>
                  v{v.number} ({label("versionState", v.state).toLowerCase()})
                </option>
              ))}
            </SelectField>
            <SelectField
              label="Compare with"
              value={compareEdits ? "edits" : (b?.id ?? "")}
              disabled={!versions.length}
              onChange={(e) => {
                setCompareEdits(e.target.value === "edits");
                setEdits({});
                setVersionB(e.target.value && e.target.value !== "edits" ? Number(e.target.value) : null);
              }}
            >
              <option value="">No comparison</option>
              {isEngineer ? <option value="edits">Unsaved edits of this version</option> : null}
              {versions
                .filter((v) => v.id !== a?.id)
                .map((v) => (
                  <option key={v.id} value={v.id}>
                    v{v.number} ({label("versionState", v.state).toLowerCase()})
                  </option>
                ))}
            </SelectField>
          </div>
          {compareEdits && a ? <EditsFields params={a.params} edits={edits} onChange={setEdits} isValid={editedParams !== null} /> : null}
          {armId !== null ? <QueryStatus query={trials} loading="Generating the arm's trials…" failed="Could not load the trials" /> : null}
          {trials.data ? (
            <fieldset className="mt-4 flex flex-col gap-2">
              <legend className="mb-1 text-sm font-semibold text-ink-100">Trials (generated from the arm's geometry, and saved ones)</legend>
              <div className="grid gap-2 md:grid-cols-2">
                {trials.data.builtin.map((t) => (
                  <Checkbox key={t.kind} label={t.definition.name} checked={picked.has(`builtin:${t.kind}`)} onChange={() => toggle(`builtin:${t.kind}`)} />
                ))}
                {trials.data.custom.map((t) => (
                  <Checkbox key={t.id} label={`${t.name} (saved)`} checked={picked.has(`custom:${t.id}`)} onChange={() => toggle(`custom:${t.id}`)} />
                ))}
              </div>
              <SelectField
                label="Replay a recorded session (the operator's own input, tick by tick)"
                className="mt-2 max-w-xl"
                value={replayId ?? ""}
                onChange={(e) => setReplayId(e.target.value ? Number(e.target.value) : null)}
              >
                <option value="">No replay</option>
                {armRecordings.map((r) => (
                  <option key={r.id} value={r.id}>
                    {r.driverName}, {formatDateTime(r.startedAt)} — {r.profileName} v{r.versionNumber}
                  </option>
                ))}
              </SelectField>
              {trials.data.notApplicable.map((t) => (
                <p key={t.kind} className="text-xs text-ink-400">
                  {label("builtinTrial", t.kind)}: {t.reason}
                </p>
              ))}
            </fieldset>
          ) : null}
          <div className="mt-4 flex items-center gap-3">
            {isEngineer && arm ? (
              <Button onClick={() => setEditorOpen(true)}>
                <Plus aria-hidden className="size-4" /> New trial…
              </Button>
            ) : null}
            {isEngineer ? (
              <Button variant="primary" disabled={!a || chosen.length === 0 || run.isPending || (compareEdits && editedParams === null)} onClick={() => a && run.mutate({ a, b: compareEdits ? "edits" : b, edits: editedParams, trials: chosen })}>
                <FlaskConical aria-hidden className="size-4" /> {b || compareEdits ? "Run and compare" : "Run trials"}
              </Button>
            ) : (
              <p className="text-sm text-ink-300">Engineers run trials; you see the runs attached to versions in the review.</p>
            )}
            {run.isPending ? <span role="status" className="text-sm text-ink-300">Running {chosen.length * (b ? 2 : 1)} trials…</span> : null}
          </div>
          {arm ? (
            <TrialEditorDialog
              arm={arm}
              open={editorOpen}
              from={null}
              onClose={() => setEditorOpen(false)}
              onSaved={(trial) => setPicked((s) => new Set([...s, `custom:${trial.id}`]))}
            />
          ) : null}
          <FailureMessage error={run.error} title="The runs failed" />
        </Card>
        {run.data ? <RunComparison a={run.data.a} b={run.data.b} arm={arms.data?.find((x) => x.id === run.data.a.runs[0]?.armId)} /> : null}
        {a && armId !== null ? <SingularityMapPanel armId={armId} version={a} /> : null}
        {isEngineer && a && detail.data ? (
          <SweepPanel
            version={a}
            latestVersionId={versions[0]!.id}
            trials={chosenTrials}
            trialCount={chosenTrials.length}
          />
        ) : null}
      </div>
    </>
  );
}

/** Runs of one source: a saved version ("v3") or unsaved edits of one ("v3 edited"). */
export type RunSet = { label: string; runs: TrialRun[] };
