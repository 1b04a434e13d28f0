import { useMemo } from "react";
import type { ColumnDef } from "@tanstack/react-table";
import {
  diffProfileParams,
  labelForProfilePath,
  profileWarnings,
  type DiffValue,
  type JointKind,
  type ProfileParamDiffRow,
  type ProfileParams,
} from "@jogwright/shared";
import { Badge } from "../ui/badge.tsx";
import { DataTable, useDataTable } from "../ui/data-table.tsx";
import { Message } from "../ui/message.tsx";
import { cn } from "../../lib/cn.ts";

export function formatDiffValue(value: DiffValue): string {
  if (value === null) return "—";
  if (typeof value === "boolean") return value ? "On" : "Off";
  return String(value);
}

const groupOf = (row: ProfileParamDiffRow) => row.group;
const fieldOf = (row: ProfileParamDiffRow) => row.field;

const Unit = ({ unit }: { unit: string }) => (unit === "—" ? null : <span className="num ml-1 text-xs text-ink-400">{unit}</span>);

/**
 * The shared profileWarnings of a parameter set: settings that are allowed but worth a second look (not
 * refusals; a version with warnings may be submitted and approved). Nothing when there are none.
 */
export function ParamsWarnings({ params }: { params: ProfileParams }) {
  const warnings = profileWarnings(params);
  if (warnings.length === 0) return null;
  return (
    <Message tone="warn" title={warnings.length === 1 ? "Worth a second look" : `${warnings.length} settings worth a second look`}>
      <ul className="list-disc pl-4" data-testid="profile-warnings">
        {warnings.map((w) => (
          <li key={w.field}>
            <span className="font-semibold">{labelForProfilePath(w.field)}:</span> {w.message}.
          </li>
        ))}
      </ul>
      <p className="mt-1">A warning, not a refusal: the version can still be submitted and approved.</p>
    </Message>
  );
}

const PARAM_COLUMNS: ColumnDef<ProfileParamDiffRow>[] = [
  { id: "parameter", header: "Parameter", cell: ({ row }) => row.original.label, meta: { isRowHeader: true, className: "py-1.5 font-normal text-ink-300" } },
  {
    id: "value",
    header: "Value",
    cell: ({ row: { original: r } }) => (
      <>
        <span className="num text-ink-100">{formatDiffValue(r.after)}</span>
        <Unit unit={r.uiUnit} />
      </>
    ),
    meta: { className: "py-1.5 text-right", headClassName: "text-right" },
  },
];

/** Every parameter of one version, grouped as in the form, values in UI units, with its warnings. */
export function ParamsTable({ params, jointKinds, caption }: { params: ProfileParams; jointKinds?: readonly JointKind[]; caption: string }) {
  const rows = useMemo(() => diffProfileParams(params, params, jointKinds), [params, jointKinds]);
  const table = useDataTable({ data: rows, columns: PARAM_COLUMNS, getRowId: fieldOf });
  return (
    <div className="flex flex-col gap-2">
      <ParamsWarnings params={params} />
      <DataTable table={table} caption={caption} emptyMessage="No parameters." groupOf={groupOf} />
    </div>
  );
}

/** The value before or after, with its unit; `changedClass` marks it on a changed row. */
function valueColumn(side: "before" | "after", header: string, changedClass: string): ColumnDef<ProfileParamDiffRow> {
  return {
    id: side,
    header,
    cell: ({ row: { original: r } }) => (
      <>
        <span className={cn("num", r.changed ? changedClass : "text-ink-100")}>{formatDiffValue(r[side])}</span>
        <Unit unit={r.uiUnit} />
      </>
    ),
    meta: { className: "py-1.5 text-right whitespace-nowrap", headClassName: "text-right" },
  };
}

function diffColumns(beforeLabel: string, afterLabel: string): ColumnDef<ProfileParamDiffRow>[] {
  return [
    {
      id: "parameter",
      header: "Parameter",
      cell: ({ row }) => <span className={row.original.changed ? "font-semibold text-ink-100" : "text-ink-300"}>{row.original.label}</span>,
      meta: { isRowHeader: true, className: "py-1.5 font-normal" },
    },
    valueColumn("before", beforeLabel, "text-ink-300"),
    valueColumn("after", afterLabel, "font-semibold text-iris-300"),
    {
      id: "changed",
      header: () => <span className="sr-only">Changed</span>,
      cell: ({ row }) => (row.original.changed ? <Badge tone="accent">Changed</Badge> : null),
      meta: { className: "py-1.5" },
    },
  ];
}

const diffRowAttributes = (row: ProfileParamDiffRow) => ({ "data-changed": row.changed ? "true" : undefined, className: row.changed ? "bg-iris-950" : undefined });

/**
 * Two parameter sets side by side, field by field, in UI units; changed rows are marked (accent fill and
 * a "Changed" badge, so the mark does not rest on colour alone).
 */
export function ParamsDiffTable({
  before,
  after,
  beforeLabel,
  afterLabel,
  jointKinds,
  onlyChanged = false,
}: {
  before: ProfileParams;
  after: ProfileParams;
  beforeLabel: string;
  afterLabel: string;
  jointKinds?: readonly JointKind[];
  onlyChanged?: boolean;
}) {
  const all = useMemo(() => diffProfileParams(before, after, jointKinds), [before, after, jointKinds]);
  const changedCount = all.filter((r) => r.changed).length;
  const rows = useMemo(() => (onlyChanged ? all.filter((r) => r.changed) : all), [all, onlyChanged]);
  const columns = useMemo(() => diffColumns(beforeLabel, afterLabel), [beforeLabel, afterLabel]);
  const table = useDataTable({ data: rows, columns, getRowId: fieldOf });
  return (
    <div className="flex flex-col gap-2">
      <p className="text-sm text-ink-300" data-testid="diff-summary">
        {changedCount === 0 ? "No parameter differs." : `${changedCount} ${changedCount === 1 ? "parameter differs" : "parameters differ"}.`}
      </p>
      <DataTable
        table={table}
        caption={`Parameters of ${beforeLabel} and ${afterLabel}, field by field`}
        emptyMessage="No parameter differs."
        testId="params-diff"
        groupOf={groupOf}
        rowAttributes={diffRowAttributes}
      />
    </div>
  );
}
