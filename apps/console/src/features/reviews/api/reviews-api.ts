import { queryOptions } from "@tanstack/react-query";
import { z } from "zod";
import { profileVersionSchema, type ProfileVersion } from "@jogwright/shared";
import { apiRequest } from "../../../lib/api-client.ts";
import { reviewKeys } from "../../../lib/queries/reviews.ts";

const reviewItemSchema = profileVersionSchema.extend({ profileName: z.string(), operatorName: z.string(), armName: z.string() });
export type ReviewItem = z.infer<typeof reviewItemSchema>;
const reviewListSchema = z.object({ versions: z.array(reviewItemSchema) });
const oneVersionSchema = z.object({ version: profileVersionSchema });

export const reviewQueueQueryOptions = () =>
  queryOptions({
    queryKey: reviewKeys.queue(),
    queryFn: async ({ signal }) => (await apiRequest("/api/reviews", { schema: reviewListSchema, signal })).versions,
  });

export type Decision = "approve" | "reject" | "retire";

export type DecisionInput =
  | { decision: "approve"; comment: string; paramsSha256: string }
  | { decision: "reject"; reason: string }
  | { decision: "retire"; reason: string };

export async function decideVersion(versionId: number, input: DecisionInput): Promise<ProfileVersion> {
  const { decision, ...body } = input;
  return (await apiRequest(`/api/versions/${versionId}/${decision}`, { method: "POST", body, schema: oneVersionSchema })).version;
}
