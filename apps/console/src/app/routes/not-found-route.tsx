import { Link, useLocation } from "react-router";
import { PageHeader } from "../../components/layout/page-header.tsx";
import { DocumentTitle } from "../../components/layout/document-title.tsx";

export function NotFoundRoute() {
  const location = useLocation();
  return (
    <>
      <DocumentTitle page="Not found" />
      <PageHeader title="Page not found" description={<>There is no page at <span className="num">{location.pathname}</span>.</>} />
      <Link to="/" className="font-semibold text-iris-300 hover:underline">
        Go to the overview
      </Link>
    </>
  );
}
