import { AuditPage } from "../../features/audit/components/audit-page.tsx";
import { titledRoute } from "./titled-route.tsx";

export default titledRoute("Audit", (user) => <AuditPage isAdmin={user.roles.includes("admin")} />);
