import { queryOptions, useQuery } from "@tanstack/react-query";
import { z } from "zod";
import { profileVersionSchema } from "@jogwright/shared";
import { apiRequest } from "../api-client.ts";
import { fetchMember } from "./resource.ts";

/** The review queue's key factory: every change to a version's state invalidates `reviewKeys.all`. */
export const reviewKeys = {
  all: ["reviews"] as const,
  queue: () => [...reviewKeys.all, "queue"] as const,
  /** The navigation's count badge: its own key, polled in the background, refreshed by every invalidation. */
  count: () => [...reviewKeys.all, "count"] as const,
};

const reviewItemSchema = profileVersionSchema.extend({ profileName: z.string(), operatorName: z.string(), armName: z.string() });
export type ReviewItem = z.infer<typeof reviewItemSchema>;
const reviewListSchema = z.object({ versions: z.array(reviewItemSchema) });

/** GET /api/reviews: the submitted versions waiting for a decision (the Reviews page and the nav badge). */
export const reviewQueueQueryOptions = () =>
  queryOptions({
    queryKey: reviewKeys.queue(),
    queryFn: fetchMember("/api/reviews", reviewListSchema, "versions"),
  });

/** How often the badge asks when nothing on this page changed a version (another officer's queue moves too). */
const QUEUE_COUNT_POLL_MS = 30_000;

/**
 * The number of submissions waiting, for the navigation badge (safety officers only: `enabled`). Polled
 * as a background request, so an open page does not keep the sign-in alive; any mutation that moves a
 * version invalidates `reviewKeys.all` and refreshes it at once.
 */
export function useReviewQueueCount(enabled: boolean) {
  return useQuery({
    queryKey: reviewKeys.count(),
    queryFn: async ({ signal }) => (await apiRequest("/api/reviews", { schema: reviewListSchema, signal, isBackground: true })).versions.length,
    refetchInterval: QUEUE_COUNT_POLL_MS,
    enabled,
  });
}
