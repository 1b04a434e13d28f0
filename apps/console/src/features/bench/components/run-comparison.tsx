import { useMemo, useState } from "react";
import { Box } from "lucide-react";
import { useQueries } from "@tanstack/react-query";
import type { ColumnDef } from "@tanstack/react-table";
import type { Arm, DisplaySeries, TrialRun } from "@jogwright/shared";
import { ReplayPlayer } from "../../../components/jog/replay-player.tsx";
import { Button } from "../../../components/ui/button.tsx";
import { framesOfRun } from "../run-frames.ts";
import { Plot } from "../../../components/charts/plot.tsx";
import { ExportLinks } from "../../../components/ui/export-links.tsx";
import { Badge } from "../../../components/ui/badge.tsx";
import { Card } from "../../../components/ui/card.tsx";
import { DataTable, useDataTable } from "../../../components/ui/data-table.tsx";
import { DEG, METRIC_ROWS, MM, verdict, wristOf, type MetricRow } from "../../../components/bench/metric-rows.ts";
import { runDetailQueryOptions } from "../api/bench-api.ts";
import type { RunSet } from "./bench-page.tsx";

interface Row {
  metric: MetricRow;
  a: number;
  b: number | null;
}

function ComparisonTable({ trialName, a, b, labelA, labelB }: { trialName: string; a: TrialRun; b: TrialRun | null; labelA: string; labelB: string | null }) {
  const rows = useMemo<Row[]>(() => METRIC_ROWS.map((metric) => ({ metric, a: metric.value(a.metrics), b: b ? metric.value(b.metrics) : null })), [a, b]);
  const columns = useMemo<ColumnDef<Row>[]>(() => {
    const format = (r: Row, v: number) => `${v.toFixed(r.metric.digits)}${r.metric.unit ? ` ${r.metric.unit}` : ""}`;
    const cols: ColumnDef<Row>[] = [
      { id: "metric", header: "Metric", meta: { isRowHeader: true }, cell: (c) => c.row.original.metric.label },
      { id: "a", header: labelA, meta: { className: "num text-right", headClassName: "text-right" }, cell: (c) => format(c.row.original, c.row.original.a) },
    ];
    if (labelB) {
      cols.push(
        { id: "b", header: labelB, meta: { className: "num text-right", headClassName: "text-right" }, cell: (c) => (c.row.original.b === null ? "—" : format(c.row.original, c.row.original.b)) },
        {
          id: "verdict",
          header: `${labelB} against ${labelA}`,
          cell: (c) => {
            const r = c.row.original;
            const v = r.b === null ? null : verdict(r.metric, r.a, r.b);
            if (v === null) return <span className="text-xs text-ink-400">not judged</span>;
            return <Badge tone={v === "better" ? "ok" : v === "worse" ? "stop" : "neutral"}>{v}</Badge>;
          },
        },
      );
    }
    return cols;
  }, [labelA, labelB]);
  const table = useDataTable({ data: rows, columns, getRowId: (r) => r.metric.id });
  return <DataTable table={table} caption={`Metrics of “${trialName}”`} emptyMessage="No metrics" testId="bench-metrics" />;
}

/** Per sample: the TCP's distance from the commanded position at the same tick [mm]. */
const distanceFromCommanded = (s: DisplaySeries) => s.tcp.map((p, k) => Math.hypot(p[0]! - s.reference[k]![0]!, p[1]! - s.reference[k]![1]!, p[2]! - s.reference[k]![2]!) * MM);
/** Per sample: the largest |q̇| of the wrist joints [deg/s]. */
const wristRate = (s: DisplaySeries) => s.qdot.map((q) => Math.max(...wristOf(s.n).map((i) => Math.abs(q[i]!))) * DEG);

/** Two series on one time axis: B's samples are placed at A's times (both runs share the tick rate and trial). */
function overlay(a: DisplaySeries, b: DisplaySeries | null, f: (s: DisplaySeries) => number[]): (number | null)[][] {
  const av = f(a);
  if (!b) return [a.t, av];
  const bv = f(b);
  const times = [...new Set([...a.t, ...b.t])].sort((x, y) => x - y);
  const at = new Map(a.t.map((t, i) => [t, av[i]!]));
  const bt = new Map(b.t.map((t, i) => [t, bv[i]!]));
  return [times, times.map((t) => at.get(t) ?? null), times.map((t) => bt.get(t) ?? null)];
}

function RunPlots({ arm, trialName, a, b, labelA, labelB }: { arm: Arm | undefined; trialName: string; a: TrialRun; b: TrialRun | null; labelA: string; labelB: string | null }) {
  const [da, db] = useQueries({ queries: [runDetailQueryOptions(a.id), ...(b ? [runDetailQueryOptions(b.id)] : [])] });
  const sa = da?.data?.series;
  const sb = db?.data?.series ?? null;
  const [replaying, setReplaying] = useState<"a" | "b" | null>(null);
  const replay = useMemo(() => {
    if (!arm || !replaying) return null;
    const run = replaying === "a" ? a : b;
    const series = replaying === "a" ? sa : sb;
    return run && series ? { run, frames: framesOfRun(arm, run, series) } : null;
  }, [arm, replaying, a, b, sa, sb]);
  const series = useMemo(() => [{ label: labelA }, ...(labelB ? [{ label: labelB }] : [])], [labelA, labelB]);
  const plots = useMemo(() => {
    if (!sa) return null;
    return {
      deviation: overlay(sa, sb, distanceFromCommanded),
      sigma: overlay(sa, sb, (s) => s.sigmaMin.map((v) => v * MM)),
      wrist: overlay(sa, sb, wristRate),
    };
  }, [sa, sb]);
  if (!plots) return <p className="text-sm text-ink-300">Loading the series of “{trialName}”…</p>;
  return (
    <div className="flex flex-col gap-3">
      <div className="grid grid-cols-1 gap-4 xl:grid-cols-3">
        <Plot title="Distance from the commanded position" xLabel="t [s]" yLabel="mm" data={plots.deviation} series={series} testId="plot-deviation" />
        <Plot title="σ_min" xLabel="t [s]" yLabel="mm" data={plots.sigma} series={series} testId="plot-sigma" />
        <Plot title="Fastest wrist joint" xLabel="t [s]" yLabel="deg/s" data={plots.wrist} series={series} testId="plot-wrist" />
      </div>
      <div className="flex flex-wrap gap-2">
        {[{ which: "a" as const, label: labelA, loaded: sa !== undefined }, ...(b && labelB ? [{ which: "b" as const, label: labelB, loaded: sb !== null }] : [])].map(({ which, label, loaded }) => (
          <Button key={which} size="sm" variant={replaying === which ? "primary" : "secondary"} disabled={!arm || !loaded} onClick={() => setReplaying(replaying === which ? null : which)}>
            <Box aria-hidden className="size-4" /> {replaying === which ? "Close the 3D replay" : `Replay ${label} in 3D`}
          </Button>
        ))}
      </div>
      {replay && arm ? <ReplayPlayer key={replay.run.id} arm={arm} frames={replay.frames} params={replay.run.params} /> : null}
    </div>
  );
}

/** The runs of one version, or two side by side: per trial, the metrics table and overlaid plots. */
export function RunComparison({ a, b, arm }: { a: RunSet; b: RunSet | null; arm: Arm | undefined }) {
  const labelA = a.label;
  const labelB = b ? b.label : null;
  return (
    <Card title={b ? `${a.label} against ${b.label}` : `Runs of ${a.label}`}>
      <div className="flex flex-col gap-8" data-testid="bench-results">
        {a.runs.map((run, i) => {
          const other = b?.runs[i] ?? null;
          return (
            <section key={run.id} className="flex flex-col gap-3" aria-label={run.trialName}>
              <h3 className="text-base font-semibold text-ink-100">
                {run.trialName}{" "}
                {run.metrics.finished ? <Badge tone="ok">finished</Badge> : <Badge tone="warn">stalled: {run.metrics.stalledReason}</Badge>}
              </h3>
              <ComparisonTable trialName={run.trialName} a={run} b={other} labelA={labelA} labelB={labelB} />
              <RunPlots arm={arm} trialName={run.trialName} a={run} b={other} labelA={labelA} labelB={labelB} />
              <div className="flex flex-wrap items-center gap-3">
                <p className="num text-xs text-ink-400">
                  Run #{run.id}
                  {other ? `, #${other.id}` : ""} · series SHA-256 {run.seriesHash.slice(0, 12)}… · {run.durationMs} ms in the worker
                </p>
                <ExportLinks base={`/api/bench/runs/${run.id}`} what={`run ${run.id}`} />
                {other ? <ExportLinks base={`/api/bench/runs/${other.id}`} what={`run ${other.id}`} /> : null}
              </div>
            </section>
          );
        })}
      </div>
    </Card>
  );
}
