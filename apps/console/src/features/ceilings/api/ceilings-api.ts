import { queryOptions } from "@tanstack/react-query";
import { z } from "zod";
import { ceilingsRecordSchema, type Ceilings } from "@jogwright/shared";
import { apiRequest } from "../../../lib/api-client.ts";

const updateResultSchema = z.object({ record: ceilingsRecordSchema, flaggedVersionIds: z.array(z.number().int()) });
export type CeilingsUpdateResult = z.infer<typeof updateResultSchema>;

export const ceilingKeys = {
  all: ["ceilings"] as const,
  current: () => [...ceilingKeys.all, "current"] as const,
};

export const ceilingsQueryOptions = () =>
  queryOptions({
    queryKey: ceilingKeys.current(),
    queryFn: ({ signal }) => apiRequest("/api/ceilings", { schema: ceilingsRecordSchema, signal }),
  });

export function updateCeilings(input: { revision: number; ceilings: Ceilings; note: string }): Promise<CeilingsUpdateResult> {
  return apiRequest("/api/ceilings", { method: "PUT", body: input, schema: updateResultSchema });
}
