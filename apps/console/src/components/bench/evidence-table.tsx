import { useMemo } from "react";
import type { ColumnDef } from "@tanstack/react-table";
import type { TrialRun } from "@jogwright/shared";
import { Badge } from "../ui/badge.tsx";
import { DataTable, useDataTable } from "../ui/data-table.tsx";
import { METRIC_ROWS } from "./metric-rows.ts";

/** The metrics the evidence table shows of each run (ids of METRIC_ROWS). */
const SHOWN = ["maxDev", "lag", "wristRate", "wristAccel", "sigma", "stopWorst", "stopFinal"] as const;

/** How a run ended, in words a reviewer reads: finished, held by the stop-before guard, or stalled. */
export function RunOutcome({ run }: { run: TrialRun }) {
  const m = run.metrics;
  if (m.finished) return <Badge tone="ok">finished</Badge>;
  if (m.stallKind === "guard") {
    return (
      <span title={m.stalledReason ?? undefined}>
        <Badge tone="accent">held by the guard</Badge>
      </span>
    );
  }
  return (
    <span title={m.stalledReason ?? undefined}>
      <Badge tone="stop">stalled</Badge>
    </span>
  );
}

/**
 * The runs a version was submitted with: per run its trial, how it ended and the key metrics in display
 * units, and the series hash that identifies it. Used by the review screen and the printable report.
 */
export function EvidenceTable({ runs, caption }: { runs: TrialRun[]; caption: string }) {
  const columns = useMemo<ColumnDef<TrialRun>[]>(
    () => [
      { id: "trial", header: "Trial", meta: { isRowHeader: true }, cell: (c) => c.row.original.trialName },
      { id: "outcome", header: "Outcome", cell: (c) => <RunOutcome run={c.row.original} /> },
      ...SHOWN.map((id): ColumnDef<TrialRun> => {
        const row = METRIC_ROWS.find((r) => r.id === id)!;
        return {
          id,
          header: `${row.label}${row.unit ? ` (${row.unit})` : ""}`,
          meta: { className: "num text-right", headClassName: "text-right" },
          cell: (c) => row.value(c.row.original.metrics).toFixed(row.digits),
        };
      }),
      { id: "hash", header: "Series SHA-256", meta: { className: "num text-xs text-ink-400" }, cell: (c) => `${c.row.original.seriesHash.slice(0, 12)}…` },
    ],
    [],
  );
  const table = useDataTable({ data: runs, columns, getRowId: (r) => String(r.id) });
  return <DataTable table={table} caption={caption} emptyMessage="No runs attached." testId="evidence-table" verticalAlign="top" />;
}
