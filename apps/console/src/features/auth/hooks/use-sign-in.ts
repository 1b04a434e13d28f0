import { useMutation, useQueryClient } from "@tanstack/react-query";
import type { SignInInput } from "@jogwright/shared";
import { isSessionKey, storeSession } from "../../../lib/session.ts";
import { signIn, signOut } from "../api/auth-api.ts";

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
