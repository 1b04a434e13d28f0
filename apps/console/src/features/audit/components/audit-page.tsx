import { useMemo, useState, type FormEvent } from "react";
import { useSearchParams } from "react-router";
import { useQuery } from "@tanstack/react-query";
import { getCoreRowModel, useReactTable, type ColumnDef } from "@tanstack/react-table";
import { ChevronLeft, ChevronRight, Download } from "lucide-react";
import { AUDIT_ACTIONS, label, type AuditEntry } from "@jogwright/shared";
import { PageHeader } from "../../../components/layout/page-header.tsx";
import { Button } from "../../../components/ui/button.tsx";
import { DataTable } from "../../../components/ui/data-table.tsx";
import { Options, SelectField } from "../../../components/ui/select-field.tsx";
import { TextField } from "../../../components/ui/text-field.tsx";
import { capitalized, formatDateTime } from "../../../lib/format.ts";
import type { AuditEntity, AuditFilters } from "../../../lib/queries/audit.ts";
import { userListQueryOptions } from "../../../lib/queries/users.ts";
import { AUDIT_ENTITIES, auditExportHref, auditPageQueryOptions } from "../api/audit-api.ts";
import { QueryStatus } from "../../../components/ui/query-status.tsx";

const PAGE_SIZE = 50;

/** Dates are picked as local calendar days; the API takes instants, so a day runs from local midnight to midnight. */
const dayStart = (day: string) => new Date(`${day}T00:00:00`).toISOString();
const dayEnd = (day: string) => new Date(new Date(`${day}T00:00:00`).getTime() + 86_400_000 - 1).toISOString();

function filtersFrom(params: URLSearchParams): AuditFilters {
  const entity = params.get("entity");
  const fromDay = params.get("fromDay");
  const toDay = params.get("toDay");
  return {
    entity: AUDIT_ENTITIES.includes(entity as AuditEntity) ? (entity as AuditEntity) : undefined,
    action: params.get("action") || undefined,
    actorId: params.get("actorId") || undefined,
    from: fromDay ? dayStart(fromDay) : undefined,
    to: toDay ? dayEnd(toDay) : undefined,
    page: Math.max(1, Number(params.get("page")) || 1),
    pageSize: PAGE_SIZE,
  };
}

const short = (sha: string | null) => (sha ? sha.slice(0, 8) : "—");

export function AuditPage({ isAdmin }: { isAdmin: boolean }) {
  // The filters live in the address, so a filtered view can be bookmarked or shared.
  const [searchParams, setSearchParams] = useSearchParams();
  const filters = filtersFrom(searchParams);
  const audit = useQuery(auditPageQueryOptions(filters));
  const users = useQuery({ ...userListQueryOptions(), enabled: isAdmin });
  const [seenActors, setSeenActors] = useState<Map<string, string>>(new Map());
  const [periodError, setPeriodError] = useState<string | null>(null);

  // Every actor seen on any page so far, for the actor filter (updated while rendering, React's pattern for
  // state derived from changing data: no effect, no extra paint).
  const entries = audit.data?.entries ?? [];
  if (entries.some((e) => e.actorId && !seenActors.has(e.actorId))) {
    const next = new Map(seenActors);
    for (const e of entries) if (e.actorId) next.set(e.actorId, e.actorName ?? e.actorId);
    setSeenActors(next);
  }

  const actors = useMemo(() => {
    const all = new Map(seenActors);
    for (const u of users.data ?? []) all.set(u.id, `${u.displayName} (${u.username})`);
    return [...all].sort((a, b) => a[1].localeCompare(b[1]));
  }, [seenActors, users.data]);

  const onFilter = (event: FormEvent<HTMLFormElement>) => {
    event.preventDefault();
    const form = new FormData(event.currentTarget);
    // Calendar days as yyyy-mm-dd compare as text. A period that ends before it starts is refused here,
    // with the reason on the "To day" field (the API refuses it too: auditQuerySchema).
    const fromDay = String(form.get("fromDay") ?? "");
    const toDay = String(form.get("toDay") ?? "");
    if (fromDay && toDay && fromDay > toDay) {
      setPeriodError("The period ends before it starts: pick a “To day” on or after the “From day”.");
      return;
    }
    setPeriodError(null);
    const next = new URLSearchParams();
    for (const key of ["entity", "action", "actorId", "fromDay", "toDay"]) {
      const value = String(form.get(key) ?? "").trim();
      if (value) next.set(key, value);
    }
    setSearchParams(next);
  };
  const goToPage = (page: number) => {
    const next = new URLSearchParams(searchParams);
    next.set("page", String(page));
    setSearchParams(next);
  };

  const total = audit.data?.total ?? 0;
  const pageCount = Math.max(1, Math.ceil(total / PAGE_SIZE));
  const hasFilters = ["entity", "action", "actorId", "fromDay", "toDay"].some((k) => searchParams.get(k));

  return (
    <>
      <PageHeader
        title="Audit trail"
        description="Every change to accounts, arms, profiles, versions, ceilings and approvals, newest first. Entries are only ever added."
        actions={
          <a
            href={auditExportHref(filters)}
            download
            className="inline-flex h-9 items-center gap-2 rounded-md border border-ink-600 bg-ink-800 px-4 text-sm font-semibold text-ink-100 hover:border-ink-400"
          >
            <Download aria-hidden className="size-4" /> Export CSV
          </a>
        }
      />
      <form onSubmit={onFilter} className="mb-4 grid items-end gap-3 md:grid-cols-6" aria-label="Filter the audit trail" key={searchParams.toString()}>
        <SelectField label="About" name="entity" defaultValue={searchParams.get("entity") ?? ""}>
          <option value="">Anything</option>
          <Options items={AUDIT_ENTITIES} labelOf={(e) => label("auditEntity", e)} />
        </SelectField>
        <SelectField label="Action" name="action" defaultValue={searchParams.get("action") ?? ""}>
          <option value="">Any action</option>
          <Options items={AUDIT_ACTIONS} labelOf={(a) => label("auditAction", a)} />
        </SelectField>
        <SelectField label="Actor" name="actorId" defaultValue={searchParams.get("actorId") ?? ""}>
          <option value="">Anyone</option>
          {actors.map(([id, name]) => (
            <option key={id} value={id}>
              {name}
            </option>
          ))}
        </SelectField>
        <TextField label="From day" name="fromDay" type="date" defaultValue={searchParams.get("fromDay") ?? ""} />
        <TextField label="To day" name="toDay" type="date" defaultValue={searchParams.get("toDay") ?? ""} error={periodError ?? undefined} />
        <div className="flex gap-2 pb-0.5">
          <Button type="submit" variant="primary">
            Filter
          </Button>
          {hasFilters || periodError ? (
            <Button
              onClick={() => {
                setPeriodError(null);
                setSearchParams(new URLSearchParams());
              }}
            >
              Clear
            </Button>
          ) : null}
        </div>
      </form>
      <QueryStatus query={audit} loading="Loading the audit trail…" failed="Could not load the audit trail" />
      {audit.data ? (
        <>
          <AuditTable entries={audit.data.entries} />
          <nav aria-label="Audit pages" className="mt-3 flex items-center justify-between gap-3 text-sm text-ink-300">
            <p aria-live="polite">
              {total === 0
                ? "No entries."
                : `Entries ${(filters.page - 1) * PAGE_SIZE + 1}–${Math.min(filters.page * PAGE_SIZE, total)} of ${total} · page ${filters.page} of ${pageCount}`}
              {audit.isFetching ? " · updating…" : ""}
            </p>
            <span className="flex gap-2">
              <Button size="sm" disabled={filters.page <= 1} onClick={() => goToPage(filters.page - 1)}>
                <ChevronLeft aria-hidden className="size-3.5" /> Newer
              </Button>
              <Button size="sm" disabled={filters.page >= pageCount} onClick={() => goToPage(filters.page + 1)}>
                Older <ChevronRight aria-hidden className="size-3.5" />
              </Button>
            </span>
          </nav>
        </>
      ) : null}
    </>
  );
}

function AuditTable({ entries }: { entries: AuditEntry[] }) {
  const columns = useMemo<ColumnDef<AuditEntry>[]>(
    () => [
      { id: "at", header: "When", cell: (c) => <span className="num whitespace-nowrap text-ink-300">{formatDateTime(c.row.original.at)}</span> },
      { id: "actor", header: "Who", cell: (c) => c.row.original.actorName ?? <span className="text-ink-400">Jogwright (set-up)</span> },
      {
        // Named as everyone else names it: `"Pack opening" v6`, never the row id (issue 13, item 9).
        id: "entity",
        header: "About",
        cell: (c) => (
          <span className="flex flex-col">
            <span className="text-xs text-ink-400">{label("auditEntity", c.row.original.entity)}</span>
            <span>{c.row.original.entityLabel}</span>
          </span>
        ),
      },
      { id: "action", header: "Action", cell: (c) => <span className="whitespace-nowrap">{label("auditAction", c.row.original.action)}</span> },
      { id: "summary", header: "Summary", cell: (c) => <span className="text-ink-300">{capitalized(c.row.original.summary)}</span> },
      {
        id: "hash",
        header: "SHA-256 before → after",
        cell: (c) => (
          <span className="num text-xs whitespace-nowrap text-ink-400" title={`${c.row.original.sha256Before ?? "—"} → ${c.row.original.sha256After ?? "—"}`}>
            {short(c.row.original.sha256Before)} → {short(c.row.original.sha256After)}
          </span>
        ),
      },
    ],
    [],
  );
  const table = useReactTable({ data: entries, columns, getCoreRowModel: getCoreRowModel(), manualPagination: true });
  return <DataTable table={table} testId="audit-table" caption="Audit entries, newest first" emptyMessage="No entry matches these filters." verticalAlign="top" />;
}
