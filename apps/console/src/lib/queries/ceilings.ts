import { queryOptions, useQuery } from "@tanstack/react-query";
import { ceilingsRecordSchema } from "@jogwright/shared";
import { apiRequest } from "../api-client.ts";

/** The site ceilings in force (read by the ceilings page and every profile form): one key factory, one query. */

export const ceilingKeys = {
  all: ["ceilings"] as const,
  current: () => [...ceilingKeys.all, "current"] as const,
};

export const ceilingsQueryOptions = () =>
  queryOptions({
    queryKey: ceilingKeys.current(),
    queryFn: ({ signal }) => apiRequest("/api/ceilings", { schema: ceilingsRecordSchema, signal }),
  });

export const useCeilings = () => useQuery(ceilingsQueryOptions());
