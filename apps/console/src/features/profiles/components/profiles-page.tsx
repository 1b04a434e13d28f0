import { useMemo, useState } from "react";
import { Link } from "react-router";
import { useQuery } from "@tanstack/react-query";
import {
  flexRender,
  getCoreRowModel,
  getFilteredRowModel,
  getSortedRowModel,
  useReactTable,
  type ColumnDef,
  type SortingState,
} from "@tanstack/react-table";
import { ArrowDown, ArrowUp, ArrowUpDown, Plus, Search } from "lucide-react";
import type { ProfileSummary, User } from "@jogwright/shared";
import { PageHeader } from "../../../components/layout/page-header.tsx";
import { Loading } from "../../../components/ui/loading.tsx";
import { Message } from "../../../components/ui/message.tsx";
import { formatDateTime } from "../../../lib/format.ts";
import { profileDetailQueryOptions } from "../api/profiles-api.ts";
import { useProfiles } from "../hooks/use-profiles.ts";
import { VersionLabel } from "./version-state-badge.tsx";

const isPureOperator = (user: User) => user.roles.includes("operator") && !user.roles.some((r) => r === "engineer" || r === "safety_officer");

export function ProfilesPage({ user }: { user: User }) {
  const profiles = useProfiles();
  const isEngineer = user.roles.includes("engineer");
  const isOperatorOnly = isPureOperator(user);
  return (
    <>
      <title>{`${isOperatorOnly ? "My profiles" : "Profiles"} · Jogwright`}</title>
      <PageHeader
        title={isOperatorOnly ? "My profiles" : "Profiles"}
        description={
          isOperatorOnly
            ? "The rate profiles tuned for you. You drive only with a profile's approved version."
            : "Rate profiles per operator and arm. Engineers save versions and submit them; safety officers approve, reject or retire them."
        }
        actions={
          isEngineer ? (
            <Link
              to="/profiles/new"
              className="inline-flex h-9 items-center gap-2 rounded-md bg-iris-400 px-4 text-sm font-semibold text-ink-950 hover:bg-iris-300"
            >
              <Plus aria-hidden className="size-4" /> New profile
            </Link>
          ) : null
        }
      />
      {profiles.isPending ? <Loading label="Loading profiles…" /> : null}
      {profiles.isError ? (
        <Message tone="stop" title="Could not load the profiles">
          {profiles.error.message}
        </Message>
      ) : null}
      {profiles.data ? <ProfilesTable profiles={profiles.data} /> : null}
    </>
  );
}

/** The driveable version's number; it is in the summary when it is the latest, else in the profile's history. */
function DriveableCell({ profile }: { profile: ProfileSummary }) {
  const id = profile.driveableVersionId;
  const isLatest = id !== null && id === profile.latestVersion.id;
  const detail = useQuery({ ...profileDetailQueryOptions(profile.id), enabled: id !== null && !isLatest });
  if (id === null) return <span className="text-ink-400">None</span>;
  const version = isLatest ? profile.latestVersion : detail.data?.versions.find((v) => v.id === id);
  return version ? <VersionLabel version={version} /> : <span className="text-ink-400">…</span>;
}

function ProfilesTable({ profiles }: { profiles: ProfileSummary[] }) {
  const [sorting, setSorting] = useState<SortingState>([{ id: "name", desc: false }]);
  const [filter, setFilter] = useState("");
  const columns = useMemo<ColumnDef<ProfileSummary>[]>(
    () => [
      {
        id: "name",
        accessorKey: "name",
        header: "Name",
        cell: (c) => (
          <Link to={`/profiles/${c.row.original.id}`} className="font-semibold text-iris-300 hover:underline">
            {c.row.original.name}
          </Link>
        ),
      },
      { id: "operator", accessorKey: "operatorName", header: "Operator" },
      { id: "arm", accessorKey: "armName", header: "Arm" },
      {
        id: "latest",
        accessorFn: (p) => p.latestVersion.number,
        header: "Latest version",
        enableGlobalFilter: false,
        cell: (c) => <VersionLabel version={c.row.original.latestVersion} />,
      },
      {
        id: "driveable",
        header: "Driveable",
        enableSorting: false,
        enableGlobalFilter: false,
        cell: (c) => <DriveableCell profile={c.row.original} />,
      },
      {
        id: "created",
        accessorKey: "createdAt",
        header: "Created",
        enableGlobalFilter: false,
        sortingFn: "alphanumeric",
        cell: (c) => <span className="num whitespace-nowrap text-ink-300">{formatDateTime(c.row.original.createdAt)}</span>,
      },
    ],
    [],
  );
  const table = useReactTable({
    data: profiles,
    columns,
    state: { sorting, globalFilter: filter },
    onSortingChange: setSorting,
    onGlobalFilterChange: setFilter,
    globalFilterFn: "includesString",
    getCoreRowModel: getCoreRowModel(),
    getSortedRowModel: getSortedRowModel(),
    getFilteredRowModel: getFilteredRowModel(),
  });
  const rows = table.getRowModel().rows;
  return (
    <div className="flex flex-col gap-3">
      <div className="flex items-center gap-3">
        <label className="relative flex items-center">
          <span className="sr-only">Filter profiles</span>
          <Search aria-hidden className="pointer-events-none absolute left-2.5 size-4 text-ink-400" />
          <input
            type="search"
            value={filter}
            onChange={(e) => setFilter(e.target.value)}
            placeholder="Filter by name, operator or arm"
            className="h-9 w-80 max-w-full rounded-md border border-ink-600 bg-ink-800 pr-3 pl-8 text-sm text-ink-100 placeholder:text-ink-400 hover:border-ink-400"
          />
        </label>
        <p className="text-sm text-ink-400" aria-live="polite">
          {rows.length === profiles.length ? `${profiles.length} profiles` : `${rows.length} of ${profiles.length} profiles`}
        </p>
      </div>
      <div className="overflow-x-auto rounded-lg border border-ink-700">
        <table className="w-full border-collapse text-left text-sm" data-testid="profiles-table">
          <caption className="sr-only">Profiles. Select a column heading to sort by it.</caption>
          <thead className="bg-ink-800 text-ink-300">
            {table.getHeaderGroups().map((group) => (
              <tr key={group.id}>
                {group.headers.map((header) => {
                  const sorted = header.column.getIsSorted();
                  const canSort = header.column.getCanSort();
                  return (
                    <th
                      key={header.id}
                      scope="col"
                      aria-sort={sorted === "asc" ? "ascending" : sorted === "desc" ? "descending" : canSort ? "none" : undefined}
                      className="border-b border-ink-700 px-3 py-2 font-semibold"
                    >
                      {canSort ? (
                        <button
                          type="button"
                          onClick={header.column.getToggleSortingHandler()}
                          className="-mx-1 inline-flex items-center gap-1 rounded-sm px-1 hover:text-ink-100"
                        >
                          {flexRender(header.column.columnDef.header, header.getContext())}
                          {sorted === "asc" ? (
                            <ArrowUp aria-hidden className="size-3.5 text-iris-400" />
                          ) : sorted === "desc" ? (
                            <ArrowDown aria-hidden className="size-3.5 text-iris-400" />
                          ) : (
                            <ArrowUpDown aria-hidden className="size-3.5 opacity-50" />
                          )}
                        </button>
                      ) : (
                        flexRender(header.column.columnDef.header, header.getContext())
                      )}
                    </th>
                  );
                })}
              </tr>
            ))}
          </thead>
          <tbody>
            {rows.map((row) => (
              <tr key={row.id} className="border-b border-ink-700 last:border-b-0 hover:bg-ink-850">
                {row.getVisibleCells().map((cell) => (
                  <td key={cell.id} className="px-3 py-2 align-middle">
                    {flexRender(cell.column.columnDef.cell, cell.getContext())}
                  </td>
                ))}
              </tr>
            ))}
            {rows.length === 0 ? (
              <tr>
                <td colSpan={columns.length} className="px-3 py-6 text-center text-ink-400">
                  {profiles.length === 0 ? "No profiles yet." : `No profile matches “${filter}”.`}
                </td>
              </tr>
            ) : null}
          </tbody>
        </table>
      </div>
    </div>
  );
}
