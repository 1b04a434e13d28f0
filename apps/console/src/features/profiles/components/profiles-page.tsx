import { useMemo } from "react";
import { Link } from "react-router";
import { useQuery } from "@tanstack/react-query";
import type { ColumnDef } from "@tanstack/react-table";
import { Plus } from "lucide-react";
import type { ProfileSummary, User } from "@jogwright/shared";
import { PageHeader } from "../../../components/layout/page-header.tsx";
import { createdAtColumn, FilterableTable, nameLinkColumn } from "../../../components/ui/data-table.tsx";
import { profileDetailQueryOptions } from "../../../lib/queries/profiles.ts";
import { useProfiles } from "../../../lib/queries/profiles.ts";
import { VersionLabel } from "../../../components/profiles/version-state-badge.tsx";
import { QueryStatus } from "../../../components/ui/query-status.tsx";
import { DocumentTitle } from "../../../components/layout/document-title.tsx";

const isPureOperator = (user: User) => user.roles.includes("operator") && !user.roles.some((r) => r === "engineer" || r === "safety_officer");

export function ProfilesPage({ user }: { user: User }) {
  const profiles = useProfiles();
  const isEngineer = user.roles.includes("engineer");
  const isOperatorOnly = isPureOperator(user);
  return (
    <>
      <DocumentTitle page={isOperatorOnly ? "My profiles" : "Profiles"} />
      <PageHeader
        title={isOperatorOnly ? "My profiles" : "Profiles"}
        description={
          isOperatorOnly
            ? "The rate profiles tuned for you. You drive only with a profile's approved version."
            : "Rate profiles per operator and arm. Engineers save versions and submit them; safety officers approve, reject or retire them."
        }
        actions={
          isEngineer ? (
            <Link
              to="/profiles/new"
              className="inline-flex h-9 items-center gap-2 rounded-md bg-iris-400 px-4 text-sm font-semibold text-ink-950 hover:bg-iris-300"
            >
              <Plus aria-hidden className="size-4" /> New profile
            </Link>
          ) : null
        }
      />
      <QueryStatus query={profiles} loading="Loading profiles…" failed="Could not load the profiles" />
      {profiles.data ? <ProfilesTable profiles={profiles.data} /> : null}
    </>
  );
}

/** The driveable version's number; it is in the summary when it is the latest, else in the profile's history. */
function DriveableCell({ profile }: { profile: ProfileSummary }) {
  const id = profile.driveableVersionId;
  const isLatest = id !== null && id === profile.latestVersion.id;
  const detail = useQuery({ ...profileDetailQueryOptions(profile.id), enabled: id !== null && !isLatest });
  if (id === null) return <span className="text-ink-400">None</span>;
  const version = isLatest ? profile.latestVersion : detail.data?.versions.find((v) => v.id === id);
  return version ? <VersionLabel version={version} /> : <span className="text-ink-400">…</span>;
}

function ProfilesTable({ profiles }: { profiles: ProfileSummary[] }) {
  const columns = useMemo<ColumnDef<ProfileSummary>[]>(
    () => [
      nameLinkColumn((profile) => `/profiles/${profile.id}`),
      { id: "operator", accessorKey: "operatorName", header: "Operator" },
      { id: "arm", accessorKey: "armName", header: "Arm" },
      {
        id: "latest",
        accessorFn: (p) => p.latestVersion.number,
        header: "Latest version",
        enableGlobalFilter: false,
        cell: (c) => <VersionLabel version={c.row.original.latestVersion} />,
      },
      {
        id: "driveable",
        header: "Driveable",
        enableSorting: false,
        enableGlobalFilter: false,
        cell: (c) => <DriveableCell profile={c.row.original} />,
      },
      createdAtColumn(),
    ],
    [],
  );
  return (
    <FilterableTable
      data={profiles}
      columns={columns}
      sortBy="name"
      testId="profiles-table"
      placeholder="Filter by name, operator or arm"
      rowsNoun="profiles"
      emptyMessage={(filter) => (profiles.length === 0 ? "No profiles yet." : `No profile matches “${filter}”.`)}
    />
  );
}
