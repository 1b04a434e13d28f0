import { useParams } from "react-router";
import { ReviewReport } from "../../features/reviews/components/review-report.tsx";
import { NotFoundRoute } from "./not-found-route.tsx";

export default function ReviewReportRoute() {
  const versionId = Number(useParams().versionId);
  if (!Number.isInteger(versionId) || versionId <= 0) return <NotFoundRoute />;
  return <ReviewReport key={versionId} versionId={versionId} />;
}
