import { DrivePage } from "../../features/drive/components/drive-page.tsx";
import { titledRoute } from "./titled-route.tsx";

export default titledRoute("Drive", () => <DrivePage />);
