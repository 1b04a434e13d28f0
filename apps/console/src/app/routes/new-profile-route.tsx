import { useCurrentUser } from "../../lib/session.ts";
import { NewProfilePage } from "../../features/profiles/components/new-profile-page.tsx";
import { NotAvailable } from "./not-available.tsx";

export default function NewProfileRoute() {
  const user = useCurrentUser();
  if (!user.roles.includes("engineer")) return <NotAvailable pageRoles={["engineer"]} userRoles={user.roles} />;
  return <NewProfilePage />;
}
