import { OutboxPage } from "../../features/outbox/components/outbox-page.tsx";
import { titledRoute } from "./titled-route.tsx";

export default titledRoute("Outbox", () => <OutboxPage />);
