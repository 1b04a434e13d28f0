import { z } from "zod";
import { userSchema, type CreateUserInput, type UpdateUserInput, type User } from "@jogwright/shared";
import { apiRequest } from "../../../lib/api-client.ts";

/** The user mutations; the list query and its keys are in lib/queries/users.ts (the audit page reads it too). */

const oneUserSchema = z.object({ user: userSchema });

export async function createUser(input: CreateUserInput): Promise<User> {
  return (await apiRequest("/api/users", { method: "POST", body: input, schema: oneUserSchema })).user;
}

export async function updateUser(id: string, patch: UpdateUserInput): Promise<User> {
  const path = `/api/users/${encodeURIComponent(id)}`;
  return (await apiRequest(path, { method: "PATCH", body: patch, schema: oneUserSchema })).user;
}
