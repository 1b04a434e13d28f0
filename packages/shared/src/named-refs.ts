import { z } from "zod";

/**
 * How an API answer names a related record: its id, and what people call it (the screen shows the name,
 * never the bare id). Each is spread into the answer's object schema where its fields stand, so the one
 * definition of, e.g., "the arm it is on" serves profiles, drivable versions, live sessions and recordings.
 */
export const armRefShape = { armId: z.number().int(), armName: z.string() };
export const profileRefShape = { profileId: z.number().int(), profileName: z.string() };
/**
 * A person named by their part in the record (`role`: "author", "actor", …): `<role>Id`, their users.id, and
 * `<role>Name`, their display name.
 */
export const personRefShape = <R extends string>(role: R) =>
  ({ [`${role}Id`]: z.string(), [`${role}Name`]: z.string() }) as Record<`${R}Id` | `${R}Name`, z.ZodString>;
/** The same where the record may name nobody (a decision not made yet, a change the system made): both null. */
export const nullablePersonRefShape = <R extends string>(role: R) =>
  ({ [`${role}Id`]: z.string().nullable(), [`${role}Name`]: z.string().nullable() }) as Record<`${R}Id` | `${R}Name`, z.ZodNullable<z.ZodString>>;
/** The person a profile is tuned for. */
export const operatorRefShape = personRefShape("operator");
/** The person driving a session. */
export const driverRefShape = personRefShape("driver");
/** The engineer who made a bench record (a custom trial, a run); the key names are older than the ones above. */
export const creatorRefShape = { createdBy: z.string(), createdByName: z.string() };
/** A version: its row id and its number within the profile (v1, v2, …). */
export const versionRefShape = { versionId: z.number().int(), versionNumber: z.number().int() };
