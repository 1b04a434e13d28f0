import { queryOptions } from "@tanstack/react-query";
import { z } from "zod";
import {
  profileSummarySchema,
  profileVersionSchema,
  type CreateProfileInput,
  type ProfileSummary,
  type ProfileVersion,
  type SaveVersionInput,
} from "@jogwright/shared";
import { apiRequest } from "../../../lib/api-client.ts";

const operatorSchema = z.object({ id: z.string(), displayName: z.string(), username: z.string() });
export type OperatorOption = z.infer<typeof operatorSchema>;

const operatorListSchema = z.object({ operators: z.array(operatorSchema) });
const profileListSchema = z.object({ profiles: z.array(profileSummarySchema) });
const profileDetailSchema = z.object({ profile: profileSummarySchema, versions: z.array(profileVersionSchema) });
export type ProfileDetail = z.infer<typeof profileDetailSchema>;
const oneProfileSchema = z.object({ profile: profileSummarySchema });
const oneVersionSchema = z.object({ version: profileVersionSchema });

const ceilingViolationSchema = z.object({ field: z.string(), ceiling: z.string(), message: z.string() });
export type VersionViolation = z.infer<typeof ceilingViolationSchema>;

const versionDetailSchema = z.object({
  version: profileVersionSchema,
  profile: profileSummarySchema,
  violations: z.array(ceilingViolationSchema),
  approvedVersion: profileVersionSchema.nullable(),
  approval: z
    .object({ approverName: z.string(), approvedAt: z.string(), comment: z.string(), paramsSha256: z.string() })
    .nullable(),
});
export type VersionDetail = z.infer<typeof versionDetailSchema>;

export const profileKeys = {
  all: ["profiles"] as const,
  lists: () => [...profileKeys.all, "list"] as const,
  details: () => [...profileKeys.all, "detail"] as const,
  detail: (profileId: number) => [...profileKeys.details(), profileId] as const,
  operators: () => [...profileKeys.all, "operators"] as const,
};

export const versionKeys = {
  all: ["versions"] as const,
  detail: (versionId: number) => [...versionKeys.all, "detail", versionId] as const,
};

export const operatorListQueryOptions = () =>
  queryOptions({
    queryKey: profileKeys.operators(),
    queryFn: async ({ signal }) => (await apiRequest("/api/operators", { schema: operatorListSchema, signal })).operators,
    staleTime: 5 * 60_000,
  });

export const profileListQueryOptions = () =>
  queryOptions({
    queryKey: profileKeys.lists(),
    queryFn: async ({ signal }) => (await apiRequest("/api/profiles", { schema: profileListSchema, signal })).profiles,
  });

export const profileDetailQueryOptions = (profileId: number) =>
  queryOptions({
    queryKey: profileKeys.detail(profileId),
    queryFn: ({ signal }) => apiRequest(`/api/profiles/${profileId}`, { schema: profileDetailSchema, signal }),
  });

export const versionDetailQueryOptions = (versionId: number) =>
  queryOptions({
    queryKey: versionKeys.detail(versionId),
    queryFn: ({ signal }) => apiRequest(`/api/versions/${versionId}`, { schema: versionDetailSchema, signal }),
  });

export async function createProfile(input: CreateProfileInput): Promise<ProfileSummary> {
  return (await apiRequest("/api/profiles", { method: "POST", body: input, schema: oneProfileSchema })).profile;
}

export async function saveVersion(profileId: number, input: SaveVersionInput): Promise<ProfileVersion> {
  return (await apiRequest(`/api/profiles/${profileId}/versions`, { method: "POST", body: input, schema: oneVersionSchema })).version;
}

export async function submitVersion(versionId: number): Promise<ProfileVersion> {
  return (await apiRequest(`/api/versions/${versionId}/submit`, { method: "POST", body: {}, schema: oneVersionSchema })).version;
}
