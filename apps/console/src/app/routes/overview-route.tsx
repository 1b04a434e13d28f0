import { RoleSummaries } from "../../features/overview/components/role-summaries.tsx";
import { PageHeader } from "../../components/layout/page-header.tsx";
import { titledRoute } from "./titled-route.tsx";

export default titledRoute("Overview", (user) => (
  <>
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
));
