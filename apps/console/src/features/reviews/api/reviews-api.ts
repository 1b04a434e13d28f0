import { z } from "zod";
import { profileVersionSchema, type ProfileVersion } from "@jogwright/shared";
import { apiRequest } from "../../../lib/api-client.ts";

export { reviewQueueQueryOptions, type ReviewItem } from "../../../lib/queries/reviews.ts";

const oneVersionSchema = z.object({ version: profileVersionSchema });

export type Decision = "approve" | "reject" | "retire";

export type DecisionInput =
  | { decision: "approve"; comment: string; paramsSha256: string; rollback?: boolean }
  | { decision: "reject"; reason: string }
  | { decision: "retire"; reason: string };

export async function decideVersion(versionId: number, input: DecisionInput): Promise<ProfileVersion> {
  const { decision, ...body } = input;
  return (await apiRequest(`/api/versions/${versionId}/${decision}`, { method: "POST", body, schema: oneVersionSchema })).version;
}

/** A safety officer re-confirms a flagged approved version under the ceilings in force (409 while it is above them). */
export async function reconfirmVersion(versionId: number, comment: string): Promise<ProfileVersion> {
  return (await apiRequest(`/api/versions/${versionId}/reconfirm`, { method: "POST", body: { comment }, schema: oneVersionSchema })).version;
}
