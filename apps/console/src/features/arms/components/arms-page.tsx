import { useMemo } from "react";
import { Link } from "react-router";
import type { ColumnDef } from "@tanstack/react-table";
import { Plus, Upload } from "lucide-react";
import type { Arm, User } from "@jogwright/shared";
import { PageHeader } from "../../../components/layout/page-header.tsx";
import { FilterableTable, nameLinkColumn } from "../../../components/ui/data-table.tsx";
import { QueryStatus } from "../../../components/ui/query-status.tsx";
import { formatDateTime } from "../../../lib/format.ts";
import { useArms } from "../../../lib/queries/arms.ts";

export const LINK_BUTTON_PRIMARY = "inline-flex h-9 items-center gap-2 rounded-md bg-iris-400 px-4 text-sm font-semibold text-ink-950 hover:bg-iris-300";
export const LINK_BUTTON_SECONDARY = "inline-flex h-9 items-center gap-2 rounded-md border border-ink-600 bg-ink-800 px-4 text-sm font-semibold text-ink-100 hover:border-ink-400";

/** The arm library: every arm as its latest revision, linking to its page; engineers add arms by form or by file. */
export function ArmsPage({ user }: { user: User }) {
  const arms = useArms();
  const isEngineer = user.roles.includes("engineer");
  return (
    <>
      <PageHeader
        title="Arms"
        description="The simulated arms, as Denavit–Hartenberg tables with their tools. An arm that profiles use is never changed in place: editing it makes a new revision."
        actions={
          isEngineer ? (
            <>
              <Link to="/arms/upload" className={LINK_BUTTON_SECONDARY}>
                <Upload aria-hidden className="size-4" /> Upload arm file
              </Link>
              <Link to="/arms/new" className={LINK_BUTTON_PRIMARY}>
                <Plus aria-hidden className="size-4" /> New arm
              </Link>
            </>
          ) : null
        }
      />
      <QueryStatus query={arms} loading="Loading arms…" failed="Could not load the arms" />
      {arms.data ? <ArmsTable arms={arms.data} /> : null}
    </>
  );
}

function ArmsTable({ arms }: { arms: Arm[] }) {
  const columns = useMemo<ColumnDef<Arm>[]>(
    () => [
      nameLinkColumn((arm) => `/arms/${arm.id}`, { isRowHeader: true, className: "font-normal" }),
      {
        id: "joints",
        accessorFn: (a) => a.model.joints.length,
        header: "Joints",
        enableGlobalFilter: false,
        cell: (c) => <span className="num">{c.row.original.model.joints.length}</span>,
        meta: { className: "text-right", headClassName: "text-right" },
      },
      {
        id: "kinds",
        header: "Joint types",
        enableSorting: false,
        enableGlobalFilter: false,
        cell: (c) => {
          const prismatic = c.row.original.model.joints.filter((j) => j.type === "prismatic").length;
          return prismatic === 0 ? "revolute" : `${c.row.original.model.joints.length - prismatic} revolute, ${prismatic} prismatic`;
        },
        meta: { className: "text-ink-300" },
      },
      {
        id: "convention",
        accessorFn: (a) => (a.model.convention === "standard" ? "standard DH" : "modified DH"),
        header: "Convention",
        meta: { className: "text-ink-300" },
      },
      { id: "description", accessorKey: "description", header: "Description", enableSorting: false, meta: { className: "max-w-xl text-sm text-ink-300" } },
      {
        id: "updated",
        accessorKey: "updatedAt",
        header: "Last changed",
        enableGlobalFilter: false,
        cell: (c) => <span className="num whitespace-nowrap text-ink-300">{formatDateTime(c.row.original.updatedAt)}</span>,
      },
    ],
    [],
  );
  return (
    <FilterableTable
      data={arms}
      columns={columns}
      sortBy="name"
      testId="arms-table"
      verticalAlign="top"
      placeholder="Filter by name, convention or description"
      rowsNoun="arms"
      emptyMessage={(filter) => (arms.length === 0 ? "No arm is defined yet." : `No arm matches “${filter}”.`)}
    />
  );
}
