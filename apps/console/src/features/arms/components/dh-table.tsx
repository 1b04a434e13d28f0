import { useMemo } from "react";
import type { ColumnDef } from "@tanstack/react-table";
import type { ArmJoint, ArmModel } from "@jogwright/shared";
import { DataTable, useDataTable } from "../../../components/ui/data-table.tsx";
import { angleDeg, jointAccel, jointSpeed, jointValue, lengthMm, type DisplayValue } from "./joint-units.ts";

export const CONVENTION_TEXT = {
  standard: "Standard DH: each link is Rz(θ)·Tz(d)·Tx(a)·Rx(α); joint i turns about z of frame i−1.",
  modified: "Modified DH: each link is Rx(α)·Tx(a)·Rz(θ)·Tz(d); row i carries α and a of link i−1; joint i turns about z of frame i.",
} as const;

export function Value({ value }: { value: DisplayValue | null }) {
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
const valueCell = { className: "py-1.5 text-right whitespace-nowrap", ...right };

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
    meta: valueCell,
  },
  {
    id: "maxSpeed",
    header: "Rated speed",
    cell: ({ row: { original: r } }) => <Value value={r.joint.maxSpeed === undefined ? null : jointSpeed(r.joint, r.joint.maxSpeed)} />,
    meta: valueCell,
  },
  {
    id: "maxAccel",
    header: () => <span title="rated acceleration; when not given, the simulation takes 4 × the rated speed per second">Rated accel.</span>,
    cell: ({ row: { original: r } }) => <Value value={r.joint.maxAccel === undefined ? null : jointAccel(r.joint, r.joint.maxAccel)} />,
    meta: valueCell,
  },
  {
    id: "ready",
    header: "Ready pose",
    cell: ({ row: { original: r } }) => <Value value={r.ready === undefined ? null : jointValue(r.joint, r.ready)} />,
    meta: valueCell,
  },
];

/** The DH table of one arm model (lengths mm, angles deg; ranges, speeds and accelerations in the joint's unit). */
export function DhTable({ model, readyPose, caption }: { model: ArmModel; readyPose: readonly number[]; caption: string }) {
  const rows = useMemo<JointRow[]>(() => model.joints.map((joint, index) => ({ index, joint, ready: readyPose[index] })), [model.joints, readyPose]);
  const table = useDataTable({ data: rows, columns: JOINT_COLUMNS, getRowId: (r) => String(r.index) });
  return (
    <div className="flex flex-col gap-2">
      <p className="text-xs text-ink-400">{CONVENTION_TEXT[model.convention]}</p>
      <DataTable table={table} caption={caption} emptyMessage="This arm has no joints." testId="dh-table" />
    </div>
  );
}
