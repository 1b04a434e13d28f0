import { queryOptions } from "@tanstack/react-query";
import { z } from "zod";
import { userSchema } from "@jogwright/shared";
import { fetchMember, resourceKeys } from "./resource.ts";

/** The users (the admin's users page; the audit page's actor filter): one key factory, one query. */

const userListSchema = z.object({ users: z.array(userSchema) });

export const userKeys = resourceKeys("users");

export const userListQueryOptions = () => queryOptions({ queryKey: userKeys.lists(), queryFn: fetchMember("/api/users", userListSchema, "users") });
