import { ArmsPage } from "../../features/arms/components/arms-page.tsx";
import { titledRoute } from "./titled-route.tsx";

export default titledRoute("Arms", (user) => <ArmsPage user={user} />);
