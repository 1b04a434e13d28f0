import type { ReactNode } from "react";
import type { User } from "@jogwright/shared";
import { DocumentTitle } from "../../components/layout/document-title.tsx";
import { useCurrentUser } from "../../lib/session.ts";

/**
 * A menu page's route (NAV_ITEMS' `load`): the window title "<title> · Jogwright", then the page, given the
 * signed-in person (the role gate has already let them in) for what depends on who they are.
 */
export function titledRoute(title: string, page: (user: User) => ReactNode) {
  return function TitledRoute() {
    const user = useCurrentUser();
    return (
      <>
        <DocumentTitle page={title} />
        {page(user)}
      </>
    );
  };
}
