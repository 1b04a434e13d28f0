import { queryOptions, type QueryClient } from "@tanstack/react-query";
import { meSchema, type SignInInput, type User } from "@jogwright/shared";
import { apiRequest, isApiRequestError } from "../../../lib/api-client.ts";

/**
 * The session as the console knows it. `user: null` means signed out; `hasSignedOut` tells a deliberate
 * sign-out (go to the sign-in page plainly) from a missing or expired session (come back here afterwards).
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

export function signIn(input: SignInInput): Promise<{ user: User }> {
  return apiRequest("/api/auth/sign-in", { method: "POST", body: input, schema: meSchema });
}

export async function signOut(): Promise<void> {
  try {
    await apiRequest("/api/auth/sign-out", { method: "POST" });
  } catch (error) {
    // Already signed out on the server: the outcome the person asked for.
    if (isApiRequestError(error) && error.status === 401) return;
    throw error;
  }
}

/** Writes the session into the cache (after sign-in, sign-out, or when a request finds it gone). */
export function storeSession(queryClient: QueryClient, session: Session): void {
  queryClient.setQueryData(sessionQueryOptions().queryKey, () => session);
}
