import { Link } from "react-router";
import { PageHeader } from "../../../components/layout/page-header.tsx";
import { EmptyTableRow, TableFrame, TableHead } from "../../../components/ui/table-frame.tsx";
import { formatDateTime } from "../../../lib/format.ts";
import { shortHash } from "../../../components/profiles/version-state-badge.tsx";
import { useReviewQueue } from "../hooks/use-reviews.ts";
import { QueryStatus } from "../../../components/ui/query-status.tsx";

export function ReviewsPage() {
  const queue = useReviewQueue();
  return (
    <>
      <PageHeader
        title="Reviews"
        description="Versions submitted for review, oldest first. Open one to see its parameters, what changed since the approved version, the ceiling check and its evidence."
      />
      <QueryStatus query={queue} loading="Loading the review queue…" failed="Could not load the review queue" />
      {queue.data ? (
        <TableFrame testId="review-queue" caption="Submitted versions waiting for a decision">
          <TableHead headings={["Profile", "Version", "Operator", "Arm", "Author", "Submitted", "Hash"]} hasActions />
          <tbody>
            {[...queue.data]
              .sort((a, b) => (a.submittedAt ?? a.createdAt).localeCompare(b.submittedAt ?? b.createdAt))
              .map((v) => (
                <tr key={v.id} className="border-b border-ink-700 last:border-b-0 hover:bg-ink-850">
                  <th scope="row" className="px-3 py-2 text-left font-semibold">
                    {v.profileName}
                  </th>
                  <td className="num px-3 py-2">v{v.number}</td>
                  <td className="px-3 py-2">{v.operatorName}</td>
                  <td className="px-3 py-2">{v.armName}</td>
                  <td className="px-3 py-2">{v.authorName}</td>
                  <td className="num px-3 py-2 whitespace-nowrap text-ink-300">{formatDateTime(v.submittedAt ?? v.createdAt)}</td>
                  <td className="num px-3 py-2 text-xs text-ink-300" title={v.paramsSha256}>
                    {shortHash(v.paramsSha256)}
                  </td>
                  <td className="px-3 py-2 text-right">
                    <Link
                      to={`/reviews/${v.id}`}
                      className="font-semibold text-iris-300 hover:underline"
                      aria-label={`Review ${v.profileName} v${v.number}`}
                    >
                      Review
                    </Link>
                  </td>
                </tr>
              ))}
            {queue.data.length === 0 ? <EmptyTableRow colSpan={8}>Nothing is waiting for review.</EmptyTableRow> : null}
          </tbody>
        </TableFrame>
      ) : null}
    </>
  );
}
