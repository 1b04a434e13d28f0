import { queryOptions, useQuery } from "@tanstack/react-query";
import { ceilingsRecordSchema, flaggedVersionsResponseSchema } from "@jogwright/shared";
import { apiRequest } from "../api-client.ts";
import { fetchMember } from "./resource.ts";

/** The site ceilings in force (read by the ceilings page and every profile form): one key factory, one query. */

export const ceilingKeys = {
  all: ["ceilings"] as const,
  current: () => [...ceilingKeys.all, "current"] as const,
  /** Approved versions flagged above the ceilings now (the ceilings page's re-confirm list). */
  flagged: () => [...ceilingKeys.all, "flagged"] as const,
};

export const ceilingsQueryOptions = () =>
  queryOptions({
    queryKey: ceilingKeys.current(),
    queryFn: ({ signal }) => apiRequest("/api/ceilings", { schema: ceilingsRecordSchema, signal }),
  });

export const useCeilings = () => useQuery(ceilingsQueryOptions());

export const flaggedVersionsQueryOptions = () =>
  queryOptions({
    queryKey: ceilingKeys.flagged(),
    queryFn: fetchMember("/api/ceilings/flagged", flaggedVersionsResponseSchema, "versions"),
  });

export const useFlaggedVersions = () => useQuery(flaggedVersionsQueryOptions());
