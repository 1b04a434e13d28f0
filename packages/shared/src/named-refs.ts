import { z } from "zod";

/**
 * How an API answer names a related record: its id, and what people call it (the screen shows the name,
 * never the bare id). Each is spread into the answer's object schema where its fields stand, so the one
 * definition of, e.g., "the arm it is on" serves profiles, drivable versions, live sessions and recordings.
 */
export const armRefShape = { armId: z.number().int(), armName: z.string() };
export const profileRefShape = { profileId: z.number().int(), profileName: z.string() };
/** The person a profile is tuned for. */
export const operatorRefShape = { operatorId: z.string(), operatorName: z.string() };
/** The person driving a session. */
export const driverRefShape = { driverId: z.string(), driverName: z.string() };
/** A version: its row id and its number within the profile (v1, v2, …). */
export const versionRefShape = { versionId: z.number().int(), versionNumber: z.number().int() };
