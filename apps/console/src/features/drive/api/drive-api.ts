import { queryOptions } from "@tanstack/react-query";
import { z } from "zod";
import { driveVersionsResponseSchema, gamepadMappingSchema, liveSessionSchema, type GamepadMapping } from "@jogwright/shared";
import { apiRequest } from "../../../lib/api-client.ts";
import { versionKeys } from "../../../lib/queries/profiles.ts";

const mappingResponseSchema = z.object({ mapping: gamepadMappingSchema });
const liveListSchema = z.object({ sessions: z.array(liveSessionSchema) });

export const driveKeys = {
  gamepadMapping: () => ["gamepad-mapping"] as const,
  liveSessions: () => ["jog", "live"] as const,
};

/**
 * GET /api/drive/versions: what the signed-in person may drive, decided on the server by the one driving
 * rule (isDriveable); the picker shows exactly this list.
 */
export const driveableVersionsQueryOptions = () =>
  queryOptions({
    queryKey: versionKeys.driveable(),
    queryFn: async ({ signal }) => (await apiRequest("/api/drive/versions", { schema: driveVersionsResponseSchema, signal })).versions,
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
    // Polled: marked as background, so watching alone does not keep the sign-in alive.
    queryFn: async ({ signal }) => (await apiRequest("/api/jog/live", { schema: liveListSchema, signal, isBackground: true })).sessions,
    refetchInterval: 5000,
    staleTime: 0,
  });
