import { queryOptions, skipToken, useQuery, useQueryClient } from "@tanstack/react-query";
import { armDetailSchema, armListResponseSchema } from "@jogwright/shared";
import { apiRequest } from "../api-client.ts";
import { auditKeys } from "./audit.ts";
import { fetchMember, resourceKeys } from "./resource.ts";

/**
 * The arms (read by the arms pages, profiles, reviews, drive, live and recordings): one key factory, the
 * list (each arm as its latest revision) and one arm with its revisions and tools.
 */
export const armKeys = {
  ...resourceKeys("arms"),
  details: () => [...armKeys.all, "detail"] as const,
  /** null: no arm picked yet (the query is skipped, never fetched with a placeholder id). */
  detail: (armId: number | null) => [...armKeys.details(), armId] as const,
};

export const armListQueryOptions = () =>
  queryOptions({
    queryKey: armKeys.lists(),
    queryFn: fetchMember("/api/arms", armListResponseSchema, "arms"),
    staleTime: 5 * 60_000,
  });

/** GET /api/arms/:id: the arm as today with every revision (newest first) and its tools; skipped while armId is null. */
export const armDetailQueryOptions = (armId: number | null) =>
  queryOptions({
    queryKey: armKeys.detail(armId),
    queryFn: armId === null ? skipToken : ({ signal }) => apiRequest(`/api/arms/${armId}`, { schema: armDetailSchema, signal }),
    staleTime: 60_000,
  });

export const useArms = () => useQuery(armListQueryOptions());
export const useArmDetail = (armId: number | null) => useQuery(armDetailQueryOptions(armId));

/** After an arm, a revision or a tool changed: every arm query and the audit trail. */
export function useInvalidateArms() {
  const queryClient = useQueryClient();
  return () => Promise.all([queryClient.invalidateQueries({ queryKey: armKeys.all }), queryClient.invalidateQueries({ queryKey: auditKeys.all })]);
}
