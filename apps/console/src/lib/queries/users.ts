import { queryOptions } from "@tanstack/react-query";
import { z } from "zod";
import { userSchema } from "@jogwright/shared";
import { apiRequest } from "../api-client.ts";

/** The users (the admin's users page; the audit page's actor filter): one key factory, one query. */

const userListSchema = z.object({ users: z.array(userSchema) });

export const userKeys = {
  all: ["users"] as const,
  lists: () => [...userKeys.all, "list"] as const,
};

export const userListQueryOptions = () =>
  queryOptions({
    queryKey: userKeys.lists(),
    queryFn: async ({ signal }) => (await apiRequest("/api/users", { schema: userListSchema, signal })).users,
  });
