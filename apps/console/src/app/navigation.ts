import { Boxes, ClipboardCheck, Eye, Film, FlaskConical, Gamepad2, Gauge, LayoutDashboard, Mail, ScrollText, SlidersHorizontal, Users, type LucideIcon } from "lucide-react";
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
  /** A count shown beside the label (e.g. the review queue's length); app/shell/nav-count.tsx reads it. */
  badge?: NavBadge;
  /** Pages below this one (e.g. ":profileId"), same roles, not in the menu. */
  children?: readonly { path: string; load: () => Promise<{ default: ComponentType }> }[];
}

/** The counts the navigation can show beside an item. */
export type NavBadge = "review-queue";

const ALL_ROLES: readonly Role[] = ["operator", "engineer", "safety_officer", "admin"];

export const NAV_ITEMS: readonly NavItem[] = [
  { label: "Overview", path: "/", icon: LayoutDashboard, roles: ALL_ROLES, load: () => import("./routes/overview-route.tsx") },
  { label: "Drive", path: "/drive", icon: Gamepad2, roles: ["operator", "engineer"], load: () => import("./routes/drive-route.tsx") },
  { label: "Live", path: "/live", icon: Eye, roles: ["engineer", "safety_officer"], load: () => import("./routes/live-route.tsx") },
  {
    label: "Recordings",
    path: "/recordings",
    icon: Film,
    roles: ["operator", "engineer", "safety_officer"],
    load: () => import("./routes/recordings-route.tsx"),
  },
  { label: "Bench", path: "/bench", icon: FlaskConical, roles: ["engineer", "safety_officer"], load: () => import("./routes/bench-route.tsx") },
  {
    label: "Arms",
    path: "/arms",
    icon: Boxes,
    roles: ALL_ROLES,
    load: () => import("./routes/arms-route.tsx"),
    // New, upload and edit are shown to everyone but say "read only" to all but engineers (the server refuses them).
    children: [
      { path: "new", load: () => import("./routes/arm-form-route.tsx") },
      { path: "upload", load: () => import("./routes/arm-upload-route.tsx") },
      { path: ":armId", load: () => import("./routes/arm-detail-route.tsx") },
      { path: ":armId/edit", load: () => import("./routes/arm-form-route.tsx") },
    ],
  },
  {
    label: "Profiles",
    path: "/profiles",
    icon: SlidersHorizontal,
    roles: ["operator", "engineer", "safety_officer"],
    load: () => import("./routes/profiles-route.tsx"),
    children: [
      { path: "new", load: () => import("./routes/new-profile-route.tsx") },
      { path: ":profileId", load: () => import("./routes/profile-detail-route.tsx") },
    ],
  },
  {
    label: "Reviews",
    path: "/reviews",
    icon: ClipboardCheck,
    roles: ["safety_officer"],
    badge: "review-queue",
    load: () => import("./routes/reviews-route.tsx"),
    children: [
      { path: ":versionId", load: () => import("./routes/review-route.tsx") },
      { path: ":versionId/report", load: () => import("./routes/review-report-route.tsx") },
    ],
  },
  { label: "Ceilings", path: "/ceilings", icon: Gauge, roles: ["engineer", "safety_officer"], load: () => import("./routes/ceilings-route.tsx") },
  { label: "Audit", path: "/audit", icon: ScrollText, roles: ["safety_officer", "admin"], load: () => import("./routes/audit-route.tsx") },
  { label: "Users", path: "/admin/users", icon: Users, roles: ["admin"], load: () => import("./routes/users-route.tsx") },
  { label: "Outbox", path: "/admin/outbox", icon: Mail, roles: ["admin"], load: () => import("./routes/outbox-route.tsx") },
];

export function navItemsFor(roles: readonly Role[]): NavItem[] {
  return NAV_ITEMS.filter((item) => hasAnyRole(roles, item.roles));
}
