import { queryOptions } from "@tanstack/react-query";
import { z } from "zod";
import { armSchema } from "@jogwright/shared";
import { apiRequest } from "../../../lib/api-client.ts";

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
