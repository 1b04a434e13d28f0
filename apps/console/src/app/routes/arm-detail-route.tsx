import { useParams } from "react-router";
import { useCurrentUser } from "../../lib/session.ts";
import { ArmDetailPage } from "../../features/arms/components/arm-detail-page.tsx";
import { NotFoundRoute } from "./not-found-route.tsx";

export default function ArmDetailRoute() {
  const user = useCurrentUser();
  const armId = Number(useParams().armId);
  if (!Number.isInteger(armId) || armId <= 0) return <NotFoundRoute />;
  // Keyed so that moving between arms starts the preview and dialogs afresh.
  return <ArmDetailPage key={armId} armId={armId} user={user} />;
}
