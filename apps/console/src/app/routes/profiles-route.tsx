import { useCurrentUser } from "../../lib/session.ts";
import { ProfilesPage } from "../../features/profiles/components/profiles-page.tsx";

export default function ProfilesRoute() {
  const user = useCurrentUser();
  return <ProfilesPage user={user} />;
}
