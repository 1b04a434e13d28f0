import { queryOptions, useQuery, type QueryClient } from "@tanstack/react-query";
import { meSchema, type User } from "@jogwright/shared";
import { apiRequest, isApiRequestError } from "./api-client.ts";

/**
 * The session as the console knows it: read by the shell, the route guards and every feature that asks who
 * is signed in. Signing in and out are the auth feature's (features/auth).
 *
 * `user: null` means signed out; `hasSignedOut` tells a deliberate sign-out (go to the sign-in page
 * plainly) from a missing or expired session (come back here afterwards).
 */
export type Session = { user: User } | { user: null; hasSignedOut: boolean };

export const authKeys = {
  all: ["auth"] as const,
  session: () => [...authKeys.all, "session"] as const,
};

export function isSessionKey(queryKey: readonly unknown[]): boolean {
  return queryKey[0] === authKeys.all[0] && queryKey[1] === "session";
}

async function fetchSession(signal: AbortSignal): Promise<Session> {
  try {
    const { user } = await apiRequest("/api/auth/me", { schema: meSchema, signal });
    return { user };
  } catch (error) {
    if (isApiRequestError(error) && error.status === 401) return { user: null, hasSignedOut: false };
    throw error;
  }
}

export const sessionQueryOptions = () =>
  queryOptions({
    queryKey: authKeys.session(),
    queryFn: ({ signal }) => fetchSession(signal),
    staleTime: 60_000,
  });

/** Writes the session into the cache (after sign-in, sign-out, or when a request finds it gone). */
export function storeSession(queryClient: QueryClient, session: Session): void {
  queryClient.setQueryData(sessionQueryOptions().queryKey, () => session);
}

/** The current session: GET /api/auth/me, where 401 means signed out (data.user === null). */
export function useSession() {
  return useQuery(sessionQueryOptions());
}

/**
 * The signed-in user, for components inside the signed-in area (the shell's guard renders them only
 * when there is one).
 */
export function useCurrentUser(): User {
  const { data } = useSession();
  if (!data?.user) throw new Error("useCurrentUser was called outside the signed-in area.");
  return data.user;
}
