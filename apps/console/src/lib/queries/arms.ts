import { queryOptions, useQuery } from "@tanstack/react-query";
import { z } from "zod";
import { armSchema } from "@jogwright/shared";
import { apiRequest } from "../api-client.ts";

/** The arms (read by the arms page, profiles, reviews, drive, live and recordings): one key factory, one query. */

const armListSchema = z.object({ arms: z.array(armSchema) });

export const armKeys = {
  all: ["arms"] as const,
  lists: () => [...armKeys.all, "list"] as const,
};

export const armListQueryOptions = () =>
  queryOptions({
    queryKey: armKeys.lists(),
    queryFn: async ({ signal }) => (await apiRequest("/api/arms", { schema: armListSchema, signal })).arms,
    staleTime: 5 * 60_000,
  });

export const useArms = () => useQuery(armListQueryOptions());
