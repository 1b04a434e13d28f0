import { useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import type { SignInInput, User } from "@jogwright/shared";
import { isSessionKey, sessionQueryOptions, signIn, signOut, storeSession } from "../api/auth-api.ts";

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

export function useSignIn() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: (input: SignInInput) => signIn(input),
    onSuccess: ({ user }) => {
      // Nothing cached may belong to the person who used this browser before.
      queryClient.removeQueries({ predicate: (q) => !isSessionKey(q.queryKey) });
      storeSession(queryClient, { user });
    },
  });
}

export function useSignOut() {
  const queryClient = useQueryClient();
  return useMutation({
    mutationFn: signOut,
    onSuccess: () => {
      queryClient.removeQueries({ predicate: (q) => !isSessionKey(q.queryKey) });
      queryClient.getMutationCache().clear();
      storeSession(queryClient, { user: null, hasSignedOut: true });
    },
  });
}
