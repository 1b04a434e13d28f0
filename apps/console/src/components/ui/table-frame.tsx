import type { ReactNode } from "react";
import { cn } from "../../lib/cn.ts";

// The console's one table look: a bordered, horizontally scrolling frame, a header row on ink-800, rows
// divided by ink-700 lines, and an empty-state row. These pieces serve tables whose rows are written by
// hand; `DataTable` (data-table.tsx) renders a TanStack table with them. They are kept apart from it so a
// page with a hand-written table does not load TanStack Table.

/** One column heading. */
export function TableHeadCell({ sort, className, children }: { sort?: "ascending" | "descending" | "none" | undefined; className?: string | undefined; children: ReactNode }) {
  return (
    <th scope="col" aria-sort={sort} className={cn("border-b border-ink-700 px-3 py-2 font-semibold", className)}>
      {children}
    </th>
  );
}

/** The bordered, horizontally scrolling frame with its table and a caption for screen readers. */
export function TableFrame({ testId, caption, children }: { testId?: string | undefined; caption: ReactNode; children: ReactNode }) {
  return (
    <div className="overflow-x-auto rounded-lg border border-ink-700">
      <table className="w-full border-collapse text-left text-sm" data-testid={testId}>
        <caption className="sr-only">{caption}</caption>
        {children}
      </table>
    </div>
  );
}

/** A header row of plain column headings; `hasActions` adds a last column named "Actions" for screen readers only. */
export function TableHead({ headings, hasActions = false }: { headings: ReactNode[]; hasActions?: boolean }) {
  return (
    <thead className="bg-ink-800 text-ink-300">
      <tr>
        {headings.map((heading, i) => (
          <TableHeadCell key={i}>{heading}</TableHeadCell>
        ))}
        {hasActions ? (
          <th scope="col" className="border-b border-ink-700 px-3 py-2">
            <span className="sr-only">Actions</span>
          </th>
        ) : null}
      </tr>
    </thead>
  );
}

/** The one row a table shows when it has nothing to list. */
export function EmptyTableRow({ colSpan, children }: { colSpan: number; children: ReactNode }) {
  return (
    <tr>
      <td colSpan={colSpan} className="px-3 py-6 text-center text-ink-400">
        {children}
      </td>
    </tr>
  );
}
