import { Outlet } from "react-router";
import { hasAnyRole, type Role } from "@jogwright/shared";
import { useCurrentUser } from "../../lib/session.ts";
import { NotAvailable } from "../routes/not-available.tsx";

/** Renders the page only for someone holding one of `roles`. The server checks the same on every request. */
export function RoleGate({ roles }: { roles: readonly Role[] }) {
  const user = useCurrentUser();
  return hasAnyRole(user.roles, roles) ? <Outlet /> : <NotAvailable pageRoles={roles} userRoles={user.roles} />;
}
