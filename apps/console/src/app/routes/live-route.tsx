import { LivePage } from "../../features/drive/components/live-page.tsx";
import { titledRoute } from "./titled-route.tsx";

export default titledRoute("Live sessions", () => <LivePage />);
