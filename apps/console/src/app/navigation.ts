import { Boxes, LayoutDashboard, Users, type LucideIcon } from "lucide-react";
import type { ComponentType } from "react";
import { hasAnyRole, type Role } from "@jogwright/shared";

/**
 * The one list of signed-in pages. It drives the side navigation (label, icon), the router (path, load)
 * and the role check (roles: the page is shown to and opens for anyone holding at least one of them;
 * the server enforces the same rule on its own routes). Add a page by adding one entry, in menu order,
 * e.g. Drive (operator, engineer), Profiles (engineer), Reviews, Ceilings and Audit (safety_officer),
 * Outbox (admin).
 */
export interface NavItem {
  label: string;
  /** Absolute path without a trailing slash; "/" is the overview. */
  path: string;
  icon: LucideIcon;
  roles: readonly Role[];
  /** Loads the route module lazily; its default export is the page. */
  load: () => Promise<{ default: ComponentType }>;
}

const ALL_ROLES: readonly Role[] = ["operator", "engineer", "safety_officer", "admin"];

export const NAV_ITEMS: readonly NavItem[] = [
  { label: "Overview", path: "/", icon: LayoutDashboard, roles: ALL_ROLES, load: () => import("./routes/overview-route.tsx") },
  { label: "Arms", path: "/arms", icon: Boxes, roles: ALL_ROLES, load: () => import("./routes/arms-route.tsx") },
  { label: "Users", path: "/admin/users", icon: Users, roles: ["admin"], load: () => import("./routes/users-route.tsx") },
];

export function navItemsFor(roles: readonly Role[]): NavItem[] {
  return NAV_ITEMS.filter((item) => hasAnyRole(roles, item.roles));
}
