import { queryOptions, skipToken, useQuery, useQueryClient } from "@tanstack/react-query";
import {
  operatorListResponseSchema,
  profileDetailResponseSchema,
  profileListResponseSchema,
  versionDetailResponseSchema,
} from "@jogwright/shared";
import { apiRequest } from "../api-client.ts";
import { auditKeys } from "./audit.ts";
import { fetchMember, resourceKeys } from "./resource.ts";
import { reviewKeys } from "./reviews.ts";

/**
 * The one query-key factory and the query options for profiles and their versions (TanStack Query's
 * query-key factory with queryOptions). Every feature that reads a profile or a version uses these, so a
 * mutation's invalidation of `profileKeys.all` / `versionKeys.all` reaches every screen.
 */
export const profileKeys = {
  ...resourceKeys("profiles"),
  details: () => [...profileKeys.all, "detail"] as const,
  /** null: nothing picked yet (the query is skipped, never fetched with a placeholder id). */
  detail: (profileId: number | null) => [...profileKeys.details(), profileId] as const,
  operators: () => [...profileKeys.all, "operators"] as const,
};

export const versionKeys = {
  all: ["versions"] as const,
  detail: (versionId: number) => [...versionKeys.all, "detail", versionId] as const,
  /** What the signed-in person may drive; under "versions", so any version or ceiling change refetches it. */
  driveable: () => [...versionKeys.all, "driveable"] as const,
};

export const operatorListQueryOptions = () =>
  queryOptions({
    queryKey: profileKeys.operators(),
    queryFn: fetchMember("/api/operators", operatorListResponseSchema, "operators"),
    staleTime: 5 * 60_000,
  });

export const profileListQueryOptions = () =>
  queryOptions({
    queryKey: profileKeys.lists(),
    queryFn: fetchMember("/api/profiles", profileListResponseSchema, "profiles"),
  });

/** GET /api/profiles/:id, or a skipped query while profileId is null. */
export const profileDetailQueryOptions = (profileId: number | null) =>
  queryOptions({
    queryKey: profileKeys.detail(profileId),
    queryFn:
      profileId === null
        ? skipToken
        : ({ signal }) => apiRequest(`/api/profiles/${profileId}`, { schema: profileDetailResponseSchema, signal }),
  });

export const versionDetailQueryOptions = (versionId: number) =>
  queryOptions({
    queryKey: versionKeys.detail(versionId),
    queryFn: ({ signal }) => apiRequest(`/api/versions/${versionId}`, { schema: versionDetailResponseSchema, signal }),
  });

export const useProfiles = () => useQuery(profileListQueryOptions());
export const useVersionDetail = (versionId: number) => useQuery(versionDetailQueryOptions(versionId));

/** After anything that creates or moves a version: profiles, versions, the review queue and the audit trail. */
export function useInvalidateProfiles() {
  const queryClient = useQueryClient();
  return () =>
    Promise.all([
      queryClient.invalidateQueries({ queryKey: profileKeys.all }),
      queryClient.invalidateQueries({ queryKey: versionKeys.all }),
      queryClient.invalidateQueries({ queryKey: reviewKeys.all }),
      queryClient.invalidateQueries({ queryKey: auditKeys.all }),
    ]);
}
