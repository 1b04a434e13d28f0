import { Link } from "react-router";
import { Lock } from "lucide-react";
import { ROLES, ROLE_LABELS, type Role } from "@jogwright/shared";
import { DocumentTitle } from "../../components/layout/document-title.tsx";

const list = (roles: readonly Role[]) =>
  ROLES.filter((r) => roles.includes(r))
    .map((r) => ROLE_LABELS[r])
    .join(", ");

/** Shown in place of a page the signed-in person's roles do not allow. */
export function NotAvailable({ pageRoles, userRoles }: { pageRoles: readonly Role[]; userRoles: readonly Role[] }) {
  return (
    <section className="flex max-w-2xl flex-col gap-4" aria-labelledby="not-available-title">
      <DocumentTitle page="Not available" />
      <div className="flex items-center gap-3">
        <Lock aria-hidden className="size-6 text-warn-400" />
        <h1 id="not-available-title" className="text-2xl font-bold">
          Not available for your roles
        </h1>
      </div>
      <p className="text-ink-300">
        This page is for: <strong className="text-ink-100">{list(pageRoles)}</strong>. You are signed in with:{" "}
        <strong className="text-ink-100">{list(userRoles)}</strong>. If you need it, ask an admin to give you the role.
      </p>
      <Link to="/" className="self-start font-semibold text-iris-300 hover:underline">
        Go to the overview
      </Link>
    </section>
  );
}
