import { useCurrentUser } from "../../lib/session.ts";
import { RoleSummaries } from "../../features/overview/components/role-summaries.tsx";
import { PageHeader } from "../../components/layout/page-header.tsx";

export default function OverviewRoute() {
  const user = useCurrentUser();
  return (
    <>
      <title>Overview · Jogwright</title>
      <PageHeader
        title={`Hello, ${user.displayName}`}
        description={
          user.roles.length > 1
            ? "You hold several roles. Here is what each of them lets you do in Jogwright."
            : "Here is what your role lets you do in Jogwright."
        }
      />
      <RoleSummaries roles={user.roles} />
    </>
  );
}
