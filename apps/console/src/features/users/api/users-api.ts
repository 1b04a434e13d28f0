import { queryOptions } from "@tanstack/react-query";
import { z } from "zod";
import { userSchema, type CreateUserInput, type UpdateUserInput, type User } from "@jogwright/shared";
import { apiRequest } from "../../../lib/api-client.ts";

const userListSchema = z.object({ users: z.array(userSchema) });
const oneUserSchema = z.object({ user: userSchema });

export const userKeys = {
  all: ["users"] as const,
  lists: () => [...userKeys.all, "list"] as const,
};

export const userListQueryOptions = () =>
  queryOptions({
    queryKey: userKeys.lists(),
    queryFn: async ({ signal }) => (await apiRequest("/api/users", { schema: userListSchema, signal })).users,
  });

export async function createUser(input: CreateUserInput): Promise<User> {
  return (await apiRequest("/api/users", { method: "POST", body: input, schema: oneUserSchema })).user;
}

export async function updateUser(id: string, patch: UpdateUserInput): Promise<User> {
  const path = `/api/users/${encodeURIComponent(id)}`;
  return (await apiRequest(path, { method: "PATCH", body: patch, schema: oneUserSchema })).user;
}
