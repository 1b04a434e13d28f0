import { queryOptions } from "@tanstack/react-query";
import { z } from "zod";
import {
  driveVersionsResponseSchema,
  gamepadMappingSchema,
  liveSessionSchema,
  profileSummarySchema,
  profileVersionSchema,
  type GamepadMapping,
} from "@jogwright/shared";
import { apiRequest } from "../../../lib/api-client.ts";

const profileListSchema = z.object({ profiles: z.array(profileSummarySchema) });
/** GET /api/profiles/:id: the profile (summary fields) and all its versions. */
const profileDetailSchema = z.object({
  profile: z.looseObject({ id: z.number().int(), name: z.string(), armId: z.number().int(), armName: z.string() }),
  versions: z.array(profileVersionSchema),
});
export type ProfileDetail = z.infer<typeof profileDetailSchema>;
const mappingResponseSchema = z.object({ mapping: gamepadMappingSchema });
const liveListSchema = z.object({ sessions: z.array(liveSessionSchema) });

export const driveKeys = {
  profiles: () => ["profiles", "list"] as const,
  /** Under "versions", so every change to a version or to the ceilings (which invalidate it) refetches it. */
  driveableVersions: () => ["versions", "driveable"] as const,
  profile: (id: number) => ["profiles", "detail", id] as const,
  gamepadMapping: () => ["gamepad-mapping"] as const,
  liveSessions: () => ["jog", "live"] as const,
};

export const profileListQueryOptions = () =>
  queryOptions({
    queryKey: driveKeys.profiles(),
    queryFn: async ({ signal }) => (await apiRequest("/api/profiles", { schema: profileListSchema, signal })).profiles,
  });

/**
 * GET /api/drive/versions: what the signed-in person may drive, decided on the server by the one driving
 * rule (isDriveable); the picker shows exactly this list.
 */
export const driveableVersionsQueryOptions = () =>
  queryOptions({
    queryKey: driveKeys.driveableVersions(),
    queryFn: async ({ signal }) => (await apiRequest("/api/drive/versions", { schema: driveVersionsResponseSchema, signal })).versions,
  });

export const profileDetailQueryOptions = (id: number) =>
  queryOptions({
    queryKey: driveKeys.profile(id),
    queryFn: ({ signal }) => apiRequest(`/api/profiles/${id}`, { schema: profileDetailSchema, signal }),
  });

export const gamepadMappingQueryOptions = () =>
  queryOptions({
    queryKey: driveKeys.gamepadMapping(),
    queryFn: async ({ signal }) => (await apiRequest("/api/gamepad-mapping", { schema: mappingResponseSchema, signal })).mapping,
    staleTime: Infinity,
  });

export async function saveGamepadMapping(mapping: GamepadMapping): Promise<GamepadMapping> {
  return (await apiRequest("/api/gamepad-mapping", { method: "PUT", body: { mapping }, schema: mappingResponseSchema })).mapping;
}

export const liveSessionsQueryOptions = () =>
  queryOptions({
    queryKey: driveKeys.liveSessions(),
    queryFn: async ({ signal }) => (await apiRequest("/api/jog/live", { schema: liveListSchema, signal })).sessions,
    refetchInterval: 5000,
    staleTime: 0,
  });
