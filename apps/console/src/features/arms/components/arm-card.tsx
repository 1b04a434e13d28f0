import { useMemo } from "react";
import type { ColumnDef } from "@tanstack/react-table";
import type { Arm, ArmJoint } from "@jogwright/shared";
import { Badge } from "../../../components/ui/badge.tsx";
import { DataTable, useDataTable } from "../../../components/ui/data-table.tsx";
import { angleDeg, jointSpeed, jointValue, lengthMm, type DisplayValue } from "./joint-units.ts";

const CONVENTION_TEXT = {
  standard: "Standard DH: each link is Rz(θ)·Tz(d)·Tx(a)·Rx(α); joint i turns about z of frame i−1.",
  modified: "Modified DH: each link is Rx(α)·Tx(a)·Rz(θ)·Tz(d); row i carries α and a of link i−1; joint i turns about z of frame i.",
} as const;

function Value({ value }: { value: DisplayValue | null }) {
  if (!value) return <span className="text-ink-400">—</span>;
  return (
    <>
      <span className="num">{value.text}</span> <span className="text-xs text-ink-400">{value.unit}</span>
    </>
  );
}

/** One joint of the DH table, with its ready-pose value. */
interface JointRow {
  index: number;
  joint: ArmJoint;
  ready: number | undefined;
}

const number = "num py-1.5 text-right";
const right = { headClassName: "text-right whitespace-nowrap" };

const JOINT_COLUMNS: ColumnDef<JointRow>[] = [
  {
    id: "joint",
    header: "Joint",
    cell: ({ row: { original: r } }) => (
      <>
        J{r.index + 1} <span className="text-xs font-normal text-ink-400">{r.joint.type}</span>
      </>
    ),
    meta: { isRowHeader: true, className: "py-1.5 font-semibold whitespace-nowrap" },
  },
  { id: "a", header: () => <span title="link length">a [mm]</span>, cell: ({ row }) => lengthMm(row.original.joint.a), meta: { className: number, ...right } },
  { id: "alpha", header: () => <span title="link twist">α [deg]</span>, cell: ({ row }) => angleDeg(row.original.joint.alpha), meta: { className: number, ...right } },
  { id: "d", header: () => <span title="link offset">d [mm]</span>, cell: ({ row }) => lengthMm(row.original.joint.d), meta: { className: number, ...right } },
  {
    id: "theta",
    header: () => <span title="joint angle offset">θ offset [deg]</span>,
    cell: ({ row }) => angleDeg(row.original.joint.theta),
    meta: { className: number, ...right },
  },
  {
    id: "range",
    header: "Range",
    cell: ({ row: { original: r } }) =>
      r.joint.min !== undefined || r.joint.max !== undefined ? (
        <>
          <span className="num">{r.joint.min === undefined ? "—" : jointValue(r.joint, r.joint.min).text}</span>
          <span className="text-ink-400"> to </span>
          <Value value={r.joint.max === undefined ? null : jointValue(r.joint, r.joint.max)} />
        </>
      ) : (
        <span className="text-ink-400">unlimited</span>
      ),
    meta: { className: "py-1.5 text-right whitespace-nowrap", ...right },
  },
  {
    id: "maxSpeed",
    header: "Max speed",
    cell: ({ row: { original: r } }) => <Value value={r.joint.maxSpeed === undefined ? null : jointSpeed(r.joint, r.joint.maxSpeed)} />,
    meta: { className: "py-1.5 text-right whitespace-nowrap", ...right },
  },
  {
    id: "ready",
    header: "Ready pose",
    cell: ({ row: { original: r } }) => <Value value={r.ready === undefined ? null : jointValue(r.joint, r.ready)} />,
    meta: { className: "py-1.5 text-right whitespace-nowrap", ...right },
  },
];

/** Translation part of a row-major 4x4 transform, in mm, and whether it also rotates. */
function describeTransform(t: readonly number[]): string {
  const [x = 0, y = 0, z = 0] = [t[3], t[7], t[11]];
  const identityRotation = [0, 5, 10].every((i) => Math.abs((t[i] ?? 0) - 1) < 1e-9) &&
    [1, 2, 4, 6, 8, 9].every((i) => Math.abs(t[i] ?? 0) < 1e-9);
  const move = `(${lengthMm(x)}, ${lengthMm(y)}, ${lengthMm(z)}) mm`;
  return identityRotation ? `offset ${move}` : `offset ${move}, rotated`;
}

export function ArmCard({ arm }: { arm: Arm }) {
  const { model } = arm;
  const headingId = `arm-${arm.id}-name`;
  const rows = useMemo<JointRow[]>(() => model.joints.map((joint, index) => ({ index, joint, ready: arm.readyPose[index] })), [model.joints, arm.readyPose]);
  const table = useDataTable({ data: rows, columns: JOINT_COLUMNS, getRowId: (r) => String(r.index) });
  return (
    <section aria-labelledby={headingId} className="rounded-lg border border-ink-700 bg-ink-850">
      <header className="flex flex-wrap items-start justify-between gap-3 border-b border-ink-700 px-5 py-4">
        <div className="flex flex-col gap-1">
          <h2 id={headingId} className="text-xl font-bold">
            {arm.name}
          </h2>
          {arm.description ? <p className="max-w-3xl text-sm text-ink-300">{arm.description}</p> : null}
        </div>
        <div className="flex gap-2">
          <Badge tone="accent">{model.joints.length} joints</Badge>
          <Badge>{model.convention === "standard" ? "standard DH" : "modified DH"}</Badge>
        </div>
      </header>
      <div className="flex flex-col gap-2 px-4 py-3">
        <p className="text-xs text-ink-400">{CONVENTION_TEXT[model.convention]}</p>
        <DataTable table={table} caption={`DH parameters of ${arm.name}`} emptyMessage="This arm has no joints." />
      </div>
      {model.base || model.tool ? (
        <dl className="flex flex-wrap gap-x-8 gap-y-1 border-t border-ink-700 px-5 py-3 text-sm">
          {model.base ? (
            <div className="flex gap-2">
              <dt className="text-ink-400">Base</dt>
              <dd className="num">{describeTransform(model.base)}</dd>
            </div>
          ) : null}
          {model.tool ? (
            <div className="flex gap-2">
              <dt className="text-ink-400">Tool (from flange)</dt>
              <dd className="num">{describeTransform(model.tool)}</dd>
            </div>
          ) : null}
        </dl>
      ) : null}
    </section>
  );
}
