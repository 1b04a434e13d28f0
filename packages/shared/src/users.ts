import { z } from "zod";
import { roleSchema } from "./roles.ts";
import { singleLineName } from "./text.ts";

export const usernameSchema = z
  .string()
  .trim()
  .min(3, "a user name has at least 3 characters")
  .max(40, "a user name has at most 40 characters")
  .regex(/^[a-z0-9._-]+$/, "use lower-case letters, digits, dot, dash or underscore");

export const displayNameSchema = singleLineName({ requiredMessage: "a display name is required", max: 80 });

export const passwordSchema = z
  .string()
  .min(10, "a password has at least 10 characters")
  .max(200, "a password has at most 200 characters");

export const userSchema = z.object({
  id: z.string(),
  username: z.string(),
  displayName: z.string(),
  email: z.string(),
  roles: z.array(roleSchema),
  isActive: z.boolean(),
  createdAt: z.string(),
  updatedAt: z.string(),
});
export type User = z.infer<typeof userSchema>;

const rolesField = z.array(roleSchema).min(1, "pick at least one role").refine(
  (r) => new Set(r).size === r.length,
  "each role once",
);

export const createUserSchema = z.object({
  username: usernameSchema,
  displayName: displayNameSchema,
  email: z.email("enter a valid e-mail address").max(120),
  password: passwordSchema,
  roles: rolesField,
});
export type CreateUserInput = z.infer<typeof createUserSchema>;

export const updateUserSchema = z
  .object({
    displayName: displayNameSchema,
    email: z.email("enter a valid e-mail address").max(120),
    roles: rolesField,
    isActive: z.boolean(),
    password: passwordSchema,
  })
  .partial()
  .refine((v) => Object.keys(v).length > 0, "nothing to change");
export type UpdateUserInput = z.infer<typeof updateUserSchema>;

export const signInSchema = z.object({
  username: z.string().trim().min(1, "enter your user name").max(40),
  password: z.string().min(1, "enter your password").max(200),
});
export type SignInInput = z.infer<typeof signInSchema>;

export const meSchema = z.object({ user: userSchema });
export type Me = z.infer<typeof meSchema>;

export const idParamSchema = z.object({ id: z.string().regex(/^[a-z0-9]{8,40}$/, "not a valid id") });
export const numericIdParamSchema = z.object({ id: z.coerce.number().int().positive("not a valid id") });
