import { BenchPage } from "../../features/bench/components/bench-page.tsx";
import { titledRoute } from "./titled-route.tsx";

export default titledRoute("Tuning bench", () => <BenchPage />);
