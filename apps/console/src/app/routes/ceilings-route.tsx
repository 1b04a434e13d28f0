import { CeilingsPage } from "../../features/ceilings/components/ceilings-page.tsx";
import { titledRoute } from "./titled-route.tsx";

export default titledRoute("Ceilings", (user) => <CeilingsPage canEdit={user.roles.includes("safety_officer")} />);
