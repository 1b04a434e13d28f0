import { useCurrentUser } from "../../lib/session.ts";
import { AuditPage } from "../../features/audit/components/audit-page.tsx";

export default function AuditRoute() {
  const user = useCurrentUser();
  return (
    <>
      <title>Audit · Jogwright</title>
      <AuditPage isAdmin={user.roles.includes("admin")} />
    </>
  );
}
