import { useCurrentUser } from "../../features/auth/hooks/use-session.ts";
import { ProfilesPage } from "../../features/profiles/components/profiles-page.tsx";

export default function ProfilesRoute() {
  const user = useCurrentUser();
  return <ProfilesPage user={user} />;
}
