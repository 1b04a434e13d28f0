import { RecordingsPage } from "../../features/recordings/components/recordings-page.tsx";
import { titledRoute } from "./titled-route.tsx";

export default titledRoute("Recordings", () => <RecordingsPage />);
