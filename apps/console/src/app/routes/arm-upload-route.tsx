import { useCurrentUser } from "../../lib/session.ts";
import { ArmUploadPage } from "../../features/arms/components/arm-upload-page.tsx";

export default function ArmUploadRoute() {
  return <ArmUploadPage user={useCurrentUser()} />;
}
