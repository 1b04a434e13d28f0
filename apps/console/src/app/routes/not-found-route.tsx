import { Link, useLocation } from "react-router";
import { PageHeader } from "../../components/layout/page-header.tsx";

export function NotFoundRoute() {
  const location = useLocation();
  return (
    <>
      <title>Not found · Jogwright</title>
      <PageHeader title="Page not found" description={<>There is no page at <span className="num">{location.pathname}</span>.</>} />
      <Link to="/" className="font-semibold text-iris-300 hover:underline">
        Go to the overview
      </Link>
    </>
  );
}
