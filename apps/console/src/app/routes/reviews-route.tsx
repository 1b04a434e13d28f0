import { ReviewsPage } from "../../features/reviews/components/reviews-page.tsx";

export default function ReviewsRoute() {
  return (
    <>
      <title>Reviews · Jogwright</title>
      <ReviewsPage />
    </>
  );
}
