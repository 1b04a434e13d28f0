import { queryOptions } from "@tanstack/react-query";
import { z } from "zod";
import { driveVersionsResponseSchema, gamepadMappingSchema, liveSessionSchema, type GamepadMapping } from "@jogwright/shared";
import { apiRequest } from "../../../lib/api-client.ts";
import { versionKeys } from "../../../lib/queries/profiles.ts";
import { fetchMember } from "../../../lib/queries/resource.ts";

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
    queryFn: fetchMember("/api/drive/versions", driveVersionsResponseSchema, "versions"),
  });

export const gamepadMappingQueryOptions = () =>
  queryOptions({
    queryKey: driveKeys.gamepadMapping(),
    queryFn: fetchMember("/api/gamepad-mapping", mappingResponseSchema, "mapping"),
    staleTime: Infinity,
  });

export async function saveGamepadMapping(mapping: GamepadMapping): Promise<GamepadMapping> {
  return (await apiRequest("/api/gamepad-mapping", { method: "PUT", body: { mapping }, schema: mappingResponseSchema })).mapping;
}

export const liveSessionsQueryOptions = () =>
  queryOptions({
    queryKey: driveKeys.liveSessions(),
    // Polled: marked as background, so watching alone does not keep the sign-in alive.
    queryFn: fetchMember("/api/jog/live", liveListSchema, "sessions", { isBackground: true }),
    refetchInterval: 5000,
    staleTime: 0,
  });
