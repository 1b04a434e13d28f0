import { useParams } from "react-router";
import { useCurrentUser } from "../../lib/session.ts";
import { ArmFormPage } from "../../features/arms/components/arm-form-page.tsx";
import { NotFoundRoute } from "./not-found-route.tsx";

/** `/arms/new` (no :armId) and `/arms/:armId/edit`. */
export default function ArmFormRoute() {
  const user = useCurrentUser();
  const param = useParams().armId;
  const armId = param === undefined ? null : Number(param);
  if (armId !== null && (!Number.isInteger(armId) || armId <= 0)) return <NotFoundRoute />;
  return <ArmFormPage key={armId ?? "new"} armId={armId} user={user} />;
}
