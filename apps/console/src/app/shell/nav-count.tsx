import { useReviewQueueCount } from "../../lib/queries/reviews.ts";
import type { NavBadge } from "../navigation.ts";

/**
 * The count beside a navigation item: for Reviews, the submissions waiting for a decision (polled every
 * 30 s in the background and refreshed at once by any change to a version). Nothing while it is zero or
 * unknown. The item is shown only to the roles that may open it, so the request is theirs to make.
 */
export function NavCount({ badge, label }: { badge: NavBadge; label: string }) {
  const count = useReviewQueueCount(badge === "review-queue");
  if (!count.data) return null;
  return (
    <span
      className="num ml-auto inline-flex min-w-5 items-center justify-center rounded-sm border border-iris-400/50 bg-iris-950 px-1 text-xs font-semibold text-iris-300"
      data-testid="nav-count"
      aria-label={`${count.data} waiting in ${label}`}
    >
      {count.data}
    </span>
  );
}
