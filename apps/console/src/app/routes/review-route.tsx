import { useParams } from "react-router";
import { useCurrentUser } from "../../lib/session.ts";
import { ReviewPage } from "../../features/reviews/components/review-page.tsx";
import { NotFoundRoute } from "./not-found-route.tsx";

export default function ReviewRoute() {
  const user = useCurrentUser();
  const versionId = Number(useParams().versionId);
  if (!Number.isInteger(versionId) || versionId <= 0) return <NotFoundRoute />;
  return <ReviewPage key={versionId} versionId={versionId} user={user} />;
}
