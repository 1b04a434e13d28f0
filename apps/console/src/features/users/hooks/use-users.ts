import { useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import type { CreateUserInput, UpdateUserInput, User } from "@jogwright/shared";
import { userKeys, userListQueryOptions } from "../../../lib/queries/users.ts";
import { createUser, updateUser } from "../api/users-api.ts";

export function useUsers() {
  return useQuery(userListQueryOptions());
}

/** Puts the changed user into the cached list at once, then refetches the list to be sure. */
function useStoreUser() {
  const queryClient = useQueryClient();
  return (user: User) => {
    queryClient.setQueryData<User[]>(userKeys.lists(), (users) => {
      if (!users) return users;
      const i = users.findIndex((u) => u.id === user.id);
      return i === -1 ? [...users, user] : users.map((u) => (u.id === user.id ? user : u));
    });
    return queryClient.invalidateQueries({ queryKey: userKeys.lists() });
  };
}

export function useCreateUser() {
  const storeUser = useStoreUser();
  return useMutation({ mutationFn: (input: CreateUserInput) => createUser(input), onSuccess: storeUser });
}

export function useUpdateUser() {
  const storeUser = useStoreUser();
  return useMutation({
    mutationFn: ({ id, patch }: { id: string; patch: UpdateUserInput }) => updateUser(id, patch),
    onSuccess: storeUser,
  });
}
