import { useParams } from "react-router";
import { useCurrentUser } from "../../lib/session.ts";
import { ProfileDetailPage } from "../../features/profiles/components/profile-detail-page.tsx";
import { NotFoundRoute } from "./not-found-route.tsx";

export default function ProfileDetailRoute() {
  const user = useCurrentUser();
  const profileId = Number(useParams().profileId);
  if (!Number.isInteger(profileId) || profileId <= 0) return <NotFoundRoute />;
  // Keyed so that moving between profiles starts every form and comparison afresh.
  return <ProfileDetailPage key={profileId} profileId={profileId} user={user} />;
}
