import { ReviewsPage } from "../../features/reviews/components/reviews-page.tsx";
import { titledRoute } from "./titled-route.tsx";

export default titledRoute("Reviews", () => <ReviewsPage />);
