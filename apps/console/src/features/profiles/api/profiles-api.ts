import {
  profileResponseSchema,
  versionResponseSchema,
  type CreateProfileInput,
  type ProfileSummary,
  type ProfileVersion,
  type SaveVersionInput,
} from "@jogwright/shared";
import { apiRequest } from "../../../lib/api-client.ts";

/** The profile mutations; the queries and their keys are in lib/queries/profiles.ts (shared by every feature). */

export async function createProfile(input: CreateProfileInput): Promise<ProfileSummary> {
  return (await apiRequest("/api/profiles", { method: "POST", body: input, schema: profileResponseSchema })).profile;
}

export async function saveVersion(profileId: number, input: SaveVersionInput): Promise<ProfileVersion> {
  return (await apiRequest(`/api/profiles/${profileId}/versions`, { method: "POST", body: input, schema: versionResponseSchema })).version;
}

/** The author takes a submission back; the note stays with the version. */
export async function withdrawVersion(versionId: number, note: string): Promise<ProfileVersion> {
  return (await apiRequest(`/api/versions/${versionId}/withdraw`, { method: "POST", body: { note }, schema: versionResponseSchema })).version;
}

/**
 * A version file (its JSON as the file holds it, already checked with versionFileSchema) as a new draft on
 * the profile's latest version; the server checks its hash, arm and the site ceilings and saves nothing on a refusal.
 */
export async function importVersionFile(profileId: number, file: unknown): Promise<ProfileVersion> {
  return (await apiRequest(`/api/profiles/${profileId}/import`, { method: "POST", body: file, schema: versionResponseSchema })).version;
}

export async function submitVersion(versionId: number): Promise<ProfileVersion> {
  return (await apiRequest(`/api/versions/${versionId}/submit`, { method: "POST", body: {}, schema: versionResponseSchema })).version;
}
