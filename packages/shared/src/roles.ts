import { z } from "zod";

/** The four roles of PRODUCT.md. A user may hold several. */
export const ROLES = ["operator", "engineer", "safety_officer", "admin"] as const;
export const roleSchema = z.enum(ROLES);
export type Role = z.infer<typeof roleSchema>;

export const ROLE_LABELS: Record<Role, string> = {
  operator: "Operator",
  engineer: "Engineer",
  safety_officer: "Safety officer",
  admin: "Admin",
};

export function hasAnyRole(held: readonly Role[], wanted: readonly Role[]): boolean {
  return wanted.some((r) => held.includes(r));
}
