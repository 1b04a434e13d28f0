import { useCurrentUser } from "../../lib/session.ts";
import { CeilingsPage } from "../../features/ceilings/components/ceilings-page.tsx";

export default function CeilingsRoute() {
  const user = useCurrentUser();
  return (
    <>
      <title>Ceilings · Jogwright</title>
      <CeilingsPage canEdit={user.roles.includes("safety_officer")} />
    </>
  );
}
