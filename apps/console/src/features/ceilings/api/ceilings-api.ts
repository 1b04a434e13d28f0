import type { z } from "zod";
import { updateCeilingsResponseSchema as updateResultSchema, type Ceilings } from "@jogwright/shared";
import { apiRequest } from "../../../lib/api-client.ts";

export type CeilingsUpdateResult = z.infer<typeof updateResultSchema>;

/** Saving the ceilings; reading them is lib/queries/ceilings.ts (every profile form reads them too). */
export function updateCeilings(input: { revision: number; ceilings: Ceilings; note: string }): Promise<CeilingsUpdateResult> {
  return apiRequest("/api/ceilings", { method: "PUT", body: input, schema: updateResultSchema });
}
