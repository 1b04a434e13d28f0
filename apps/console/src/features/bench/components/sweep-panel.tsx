import { useMemo, useRef, useState } from "react";
import type { ColumnDef } from "@tanstack/react-table";
import { useMutation } from "@tanstack/react-query";
import {
  SWEEP_OBJECTIVES, SWEEP_PARAMETERS, withSweepParameter,
  type ProfileVersion, type SweepObjective, type SweepParameter, type SweepResult, type TrialRef,
} from "@jogwright/shared";
import { Plot } from "../../../components/charts/plot.tsx";
import { Button } from "../../../components/ui/button.tsx";
import { Card } from "../../../components/ui/card.tsx";
import { DataTable, useDataTable } from "../../../components/ui/data-table.tsx";
import { FailureMessage, Message } from "../../../components/ui/message.tsx";
import { NumberField } from "../../../components/ui/number-field.tsx";
import { Options, SelectField } from "../../../components/ui/select-field.tsx";
import { describeError } from "../../../lib/api-client.ts";
import { useInvalidateProfiles } from "../../../lib/queries/profiles.ts";
import { runSweep, saveDraft } from "../api/bench-api.ts";
import { display, shown } from "../units.ts";

const PARAMETERS = Object.keys(SWEEP_PARAMETERS) as SweepParameter[];
const OBJECTIVES = Object.keys(SWEEP_OBJECTIVES) as SweepObjective[];

interface AxisDraft {
  parameter: SweepParameter;
  from: number;
  to: number;
  steps: number;
}

function AxisFields({ title, axis, onChange }: { title: string; axis: AxisDraft; onChange: (a: AxisDraft) => void }) {
  const d = display(SWEEP_PARAMETERS[axis.parameter].unit);
  return (
    <fieldset className="grid gap-3 md:grid-cols-4">
      <legend className="mb-1 text-sm font-semibold text-ink-100">{title}</legend>
      <SelectField label="Parameter" value={axis.parameter} onChange={(e) => onChange({ ...axis, parameter: e.target.value as SweepParameter })}>
        <Options items={PARAMETERS} labelOf={(p) => SWEEP_PARAMETERS[p].label} />
      </SelectField>
      <NumberField label="From" unit={d.unit} step="any" value={+(axis.from * d.factor).toPrecision(6)} onChange={(e) => onChange({ ...axis, from: e.target.valueAsNumber / d.factor })} />
      <NumberField label="To" unit={d.unit} step="any" value={+(axis.to * d.factor).toPrecision(6)} onChange={(e) => onChange({ ...axis, to: e.target.valueAsNumber / d.factor })} />
      <NumberField label="Steps" unit="points" min={2} max={100} value={axis.steps} onChange={(e) => onChange({ ...axis, steps: e.target.valueAsNumber })} />
    </fieldset>
  );
}

/**
 * A sweep of one or two parameters around the chosen version over the chosen trials: a progress bar while
 * the server runs it (server-sent progress; Cancel closes the request, which cancels it), then the
 * trade-off plot with the Pareto front marked; a point of the front becomes a draft version.
 */
export function SweepPanel({ version, latestVersionId, trials, trialCount }: { version: ProfileVersion; latestVersionId: number; trials: TrialRef[]; trialCount: number }) {
  const [first, setFirst] = useState<AxisDraft>({ parameter: "damping.lambdaMaxM", from: 0.005, to: 0.06, steps: 10 });
  const [second, setSecond] = useState<AxisDraft | null>(null);
  const [x, setX] = useState<SweepObjective>("peakWristAccelRadPerS2");
  const [y, setY] = useState<SweepObjective>("maxDeviationM");
  const [progress, setProgress] = useState<{ done: number; total: number } | null>(null);
  const abortRef = useRef<AbortController | null>(null);
  const invalidateProfiles = useInvalidateProfiles();

  const sweep = useMutation({
    mutationFn: async () => {
      const controller = new AbortController();
      abortRef.current = controller;
      setProgress(null);
      const builtins = trials.flatMap((t) => (t.kind === "builtin" ? [t.builtin] : []));
      const trialIds = trials.flatMap((t) => (t.kind === "custom" ? [t.trialId] : []));
      return runSweep({ versionId: version.id, axes: second ? [first, second] : [first], builtins, trialIds, x, y }, (done, total) => setProgress({ done, total }), controller.signal);
    },
    onSettled: () => {
      abortRef.current = null;
    },
  });
  const draft = useMutation({
    mutationFn: (point: SweepResult["points"][number]) => {
      const result = sweep.data!;
      let params = version.params;
      result.axes.forEach((axis, i) => (params = withSweepParameter(params, axis.parameter, point.values[i]!)));
      const note = `From a sweep of v${version.number}: ${result.axes.map((a, i) => `${SWEEP_PARAMETERS[a.parameter].label} = ${shown(point.values[i]!, SWEEP_PARAMETERS[a.parameter].unit)}`).join(", ")}.`;
      return saveDraft(version.profileId, latestVersionId, params, note);
    },
    onSuccess: invalidateProfiles,
  });

  const cancelled = sweep.isError && (sweep.error as Error).name === "AbortError";
  const points = sweep.data?.points ?? [];

  return (
    <Card title={`Sweep around v${version.number}`} description={`Every combination runs on the ${trialCount} chosen trial${trialCount === 1 ? "" : "s"}; each point is judged by the worst of them.`}>
      <div className="flex flex-col gap-4">
        <AxisFields title="First parameter" axis={first} onChange={setFirst} />
        {second ? (
          <>
            <AxisFields title="Second parameter" axis={second} onChange={setSecond} />
            <div>
              <Button size="sm" variant="ghost" onClick={() => setSecond(null)}>
                Sweep one parameter only
              </Button>
            </div>
          </>
        ) : (
          <div>
            <Button size="sm" variant="ghost" onClick={() => setSecond({ parameter: "damping.epsilonM", from: 0.02, to: 0.08, steps: 5 })}>
              Add a second parameter
            </Button>
          </div>
        )}
        <div className="grid gap-3 md:grid-cols-2">
          <SelectField label="Trade-off: across" value={x} onChange={(e) => setX(e.target.value as SweepObjective)}>
            <Options items={OBJECTIVES} labelOf={(o) => SWEEP_OBJECTIVES[o].label} />
          </SelectField>
          <SelectField label="Trade-off: up" value={y} onChange={(e) => setY(e.target.value as SweepObjective)}>
            <Options items={OBJECTIVES} labelOf={(o) => SWEEP_OBJECTIVES[o].label} />
          </SelectField>
        </div>
        <div className="flex items-center gap-3">
          <Button variant="primary" disabled={sweep.isPending || trials.length === 0} onClick={() => sweep.mutate()}>
            Run the sweep
          </Button>
          {sweep.isPending ? (
            <>
              <progress className="h-2 w-64 accent-iris-400" max={progress?.total ?? 1} value={progress?.done ?? 0} aria-label="Sweep progress" />
              <span className="num text-sm text-ink-300" role="status">
                {progress ? `${progress.done} of ${progress.total} runs` : "Starting…"}
              </span>
              <Button size="sm" onClick={() => abortRef.current?.abort()}>
                Cancel
              </Button>
            </>
          ) : null}
        </div>
        {cancelled ? <Message>The sweep was cancelled; nothing was kept.</Message> : null}
        {sweep.isError && !cancelled ? (
          <Message tone="stop" title="The sweep failed">
            {describeError(sweep.error)}
          </Message>
        ) : null}
        {sweep.data ? <SweepResultView result={sweep.data} onDraft={(p) => draft.mutate(p)} isSaving={draft.isPending} /> : null}
        {draft.isSuccess ? (
          <Message tone="ok" title={`Saved as draft v${draft.data.number}`}>
            {draft.data.note}
          </Message>
        ) : null}
        <FailureMessage error={draft.error} title="Could not save the draft" />
        {points.some((p) => p.invalid) ? (
          <p className="text-xs text-ink-400">{points.filter((p) => p.invalid).length} combinations are not valid profiles and did not run.</p>
        ) : null}
      </div>
    </Card>
  );
}

function SweepResultView({ result, onDraft, isSaving }: { result: SweepResult; onDraft: (p: SweepResult["points"][number]) => void; isSaving: boolean }) {
  const xo = SWEEP_OBJECTIVES[result.x], yo = SWEEP_OBJECTIVES[result.y];
  const dx = display(xo.unit), dy = display(yo.unit);
  const ran = result.points.map((p, i) => ({ p, i })).filter(({ p }) => p.objectives);
  // One x column for both series: every point, then the front drawn over it. uPlot wants x ascending.
  const data = useMemo(() => {
    const sorted = [...ran].sort((a, b) => a.p.objectives![result.x] - b.p.objectives![result.x]);
    const front = new Set(result.front);
    return {
      order: sorted.map((s) => s.i),
      columns: [
        sorted.map((s) => s.p.objectives![result.x] * dx.factor),
        sorted.map((s) => s.p.objectives![result.y] * dy.factor),
        sorted.map((s) => (front.has(s.i) ? s.p.objectives![result.y] * dy.factor : null)),
      ],
    };
  }, [ran, result, dx.factor, dy.factor]);
  const series = useMemo(() => [{ label: "point", points: true }, { label: "Pareto front", points: true, emphasis: true }], []);
  const label = (p: SweepResult["points"][number]) => result.axes.map((a, i) => `${SWEEP_PARAMETERS[a.parameter].label} ${shown(p.values[i]!, SWEEP_PARAMETERS[a.parameter].unit)}`).join(", ");
  return (
    <div className="flex flex-col gap-3" data-testid="sweep-result">
      <Plot
        title={`Trade-off over ${result.points.length} points (${(result.elapsedMs / 1000).toFixed(1)} s): ${yo.label} against ${xo.label}`}
        xLabel={`${xo.label} [${dx.unit}]`}
        yLabel={dy.unit}
        data={data.columns}
        series={series}
        testId="plot-sweep"
        height={260}
      />
      <SweepTable result={result} />
      <h4 className="text-sm font-semibold text-ink-100">The Pareto front (no other point is better on both)</h4>
      <ul className="flex flex-col gap-1 text-sm" data-testid="pareto-front">
        {result.front.map((i) => {
          const p = result.points[i]!;
          return (
            <li key={i} className="flex flex-wrap items-center gap-3">
              <span className="num">{label(p)}</span>
              <span className="num text-ink-300">
                {xo.label} {shown(p.objectives![result.x], xo.unit)}, {yo.label} {shown(p.objectives![result.y], yo.unit)}; {p.finishedTrials}/{p.trials} finished
              </span>
              <Button size="sm" disabled={isSaving} onClick={() => onDraft(p)}>
                Make a draft with these values
              </Button>
            </li>
          );
        })}
      </ul>
    </div>
  );
}

type PointRow = SweepResult["points"][number] & { index: number; isFront: boolean };

/** Every point of a sweep with every objective (the worst over its trials), in display units: the table behind the plot. */
function SweepTable({ result }: { result: SweepResult }) {
  const rows = useMemo<PointRow[]>(() => result.points.map((p, index) => ({ ...p, index, isFront: result.front.includes(index) })), [result]);
  const columns = useMemo<ColumnDef<PointRow>[]>(
    () => [
      ...result.axes.map((a, i): ColumnDef<PointRow> => ({
        id: `axis-${i}`,
        header: `${SWEEP_PARAMETERS[a.parameter].label} (${display(SWEEP_PARAMETERS[a.parameter].unit).unit})`,
        meta: { className: "num text-right", headClassName: "text-right", isRowHeader: i === 0 },
        cell: (c) => (c.row.original.values[i]! * display(SWEEP_PARAMETERS[a.parameter].unit).factor).toPrecision(3),
      })),
      ...OBJECTIVES.map((o): ColumnDef<PointRow> => ({
        id: o,
        header: `${SWEEP_OBJECTIVES[o].label} (${display(SWEEP_OBJECTIVES[o].unit).unit})`,
        meta: { className: "num text-right", headClassName: "text-right" },
        cell: (c) => {
          const v = c.row.original.objectives?.[o];
          return v === undefined ? "—" : (v * display(SWEEP_OBJECTIVES[o].unit).factor).toPrecision(3);
        },
      })),
      {
        id: "finished",
        header: "Finished",
        meta: { className: "num text-right", headClassName: "text-right" },
        cell: (c) => (c.row.original.invalid ? c.row.original.invalid : `${c.row.original.finishedTrials}/${c.row.original.trials}`),
      },
      { id: "front", header: "Front", cell: (c) => (c.row.original.isFront ? "on the front" : "") },
    ],
    [result],
  );
  const table = useDataTable({ data: rows, columns, getRowId: (r) => String(r.index) });
  return (
    <details>
      <summary className="cursor-pointer text-sm font-semibold text-iris-300">Every point, every objective (the table behind the plot)</summary>
      <div className="mt-2 overflow-x-auto">
        <DataTable table={table} caption="Sweep points: the worst over the chosen trials" emptyMessage="No points" testId="sweep-table" />
      </div>
    </details>
  );
}
