import type { z } from "zod";
import { apiRequest } from "../api-client.ts";

/**
 * The start of a resource's query-key factory (TanStack Query's key factories): `all`, which every
 * mutation of the resource invalidates, and `lists()` for its list. A factory adds its other keys under `all`.
 */
export function resourceKeys<Root extends string>(root: Root) {
  const all = [root] as const;
  return { all, lists: () => [...all, "list"] as const };
}

/**
 * The queryFn of a GET whose answer wraps what the page reads in one member (`{ users: [...] }` → the
 * users): the answer checked with the shared `schema`, then that member. `isBackground` marks a polled
 * request (it never extends the sign-in; see apiRequest).
 */
export function fetchMember<S extends z.ZodType<Record<string, unknown>>, K extends keyof z.output<S>>(
  path: string,
  schema: S,
  member: K,
  { isBackground = false }: { isBackground?: boolean } = {},
) {
  return async ({ signal }: { signal: AbortSignal }): Promise<z.output<S>[K]> => {
    // apiRequest's result is the schema's output whenever a schema is given.
    const answer = (await apiRequest(path, { schema, signal, isBackground })) as z.output<S>;
    return answer[member];
  };
}
