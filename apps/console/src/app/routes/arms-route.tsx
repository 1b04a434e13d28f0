import { ArmsPage } from "../../features/arms/components/arms-page.tsx";
import { useCurrentUser } from "../../lib/session.ts";

export default function ArmsRoute() {
  const user = useCurrentUser();
  return (
    <>
      <title>Arms · Jogwright</title>
      <ArmsPage user={user} />
    </>
  );
}
