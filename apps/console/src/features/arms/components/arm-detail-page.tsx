import { useMemo } from "react";
import { Link, useLocation, useSearchParams } from "react-router";
import type { ColumnDef } from "@tanstack/react-table";
import { ArrowLeft, Pencil } from "lucide-react";
import type { ArmRevision, User } from "@jogwright/shared";
import { PageHeader } from "../../../components/layout/page-header.tsx";
import { Badge } from "../../../components/ui/badge.tsx";
import { Button } from "../../../components/ui/button.tsx";
import { Card } from "../../../components/ui/card.tsx";
import { DataTable, useDataTable } from "../../../components/ui/data-table.tsx";
import { Message } from "../../../components/ui/message.tsx";
import { QueryStatus } from "../../../components/ui/query-status.tsx";
import { formatDateTime } from "../../../lib/format.ts";
import { useArmDetail } from "../../../lib/queries/arms.ts";
import type { ArmSavedState } from "./arm-form-page.tsx";
import { ArmPreview } from "./arm-preview.tsx";
import { LINK_BUTTON_SECONDARY } from "./arms-page.tsx";
import { DhTable } from "./dh-table.tsx";
import { BaseAndTool } from "./pose-facts.tsx";
import { ToolsCard } from "./tools-card.tsx";
import { DocumentTitle } from "../../../components/layout/document-title.tsx";

/**
 * One arm: the revision viewed (`?revision=<id>`, else the current one) — its DH table, ranges, rated speeds
 * and accelerations, base and tool, a 3D preview with sliders and σ at the previewed pose, its tools — and
 * the revision history.
 */
export function ArmDetailPage({ armId, user }: { armId: number; user: User }) {
  const detail = useArmDetail(armId);
  const [search, setSearch] = useSearchParams();
  const isEngineer = user.roles.includes("engineer");
  const arm = detail.data?.arm;
  const revisions = detail.data?.revisions ?? [];
  const asked = Number(search.get("revision"));
  const viewed = revisions.find((r) => r.id === asked) ?? revisions[0];
  const isCurrent = viewed !== undefined && viewed.id === arm?.latestRevisionId;
  // What the form or upload that led here saved (the router's state for this visit).
  const saved = (useLocation().state as ArmSavedState | null)?.saved;

  return (
    <>
      <DocumentTitle page={arm?.name ?? "Arm"} />
      <Link to="/arms" className="mb-3 inline-flex items-center gap-1 text-sm font-semibold text-iris-300 hover:underline">
        <ArrowLeft aria-hidden className="size-4" /> All arms
      </Link>
      <QueryStatus query={detail} loading="Loading the arm…" failed="Could not load the arm" />
      {arm && viewed ? (
        <>
          <PageHeader
            title={arm.name}
            description={
              <>
                {arm.description ? <span className="block">{arm.description}</span> : null}
                <span className="text-sm">
                  Revision <span className="num">{arm.revision}</span> is current · {arm.model.joints.length} joints,{" "}
                  {arm.model.convention === "standard" ? "standard" : "modified"} DH
                </span>
              </>
            }
            actions={
              isEngineer ? (
                <Link to={`/arms/${arm.id}/edit`} className={LINK_BUTTON_SECONDARY}>
                  <Pencil aria-hidden className="size-4" /> Edit (new revision)
                </Link>
              ) : null
            }
          />
          <div className="flex flex-col gap-6">
            {saved ? (
              <Message tone="ok" title="Saved">
                <span data-testid="arm-saved">{saved}</span>
              </Message>
            ) : null}
            {!isCurrent ? (
              <Message tone="info" title={`Viewing revision ${viewed.revision}, not the current one`}>
                Profiles made on it keep driving it.{" "}
                <button type="button" className="text-iris-300 underline" onClick={() => setSearch({})}>
                  Show the current revision {arm.revision}
                </button>
              </Message>
            ) : null}
            <Card
              title={`Kinematics, revision ${viewed.revision}`}
              description="Lengths in mm, angles in deg; a sliding joint's range, speed and acceleration in mm, mm/s and mm/s²."
            >
              <div className="flex flex-col gap-4">
                <DhTable model={viewed.model} readyPose={viewed.readyPose} caption={`DH parameters of ${arm.name}, revision ${viewed.revision}`} />
                <BaseAndTool model={viewed.model} />
              </div>
            </Card>
            <Card title="Preview" description="Move the joints to see the arm and how far from singular it is there. Starts at the ready pose.">
              <ArmPreview key={viewed.id} model={viewed.model} startPose={viewed.readyPose} title={`Revision ${viewed.revision} at the pose below`} />
            </Card>
            <ToolsCard armId={arm.id} revision={viewed} isEngineer={isEngineer} />
            <RevisionsCard revisions={revisions} currentId={arm.latestRevisionId} viewedId={viewed.id} onView={(id) => setSearch(id === arm.latestRevisionId ? {} : { revision: String(id) })} />
          </div>
        </>
      ) : null}
    </>
  );
}

function RevisionsCard({ revisions, currentId, viewedId, onView }: { revisions: ArmRevision[]; currentId: number; viewedId: number; onView: (revisionId: number) => void }) {
  const columns = useMemo<ColumnDef<ArmRevision>[]>(
    () => [
      {
        id: "revision",
        header: "Revision",
        cell: ({ row: { original: r } }) => (
          <span className="flex items-center gap-2">
            <span className="num font-semibold">{r.revision}</span>
            {r.id === currentId ? <Badge tone="accent">current</Badge> : null}
            {r.id === viewedId ? <Badge>viewing</Badge> : null}
          </span>
        ),
        meta: { isRowHeader: true, className: "whitespace-nowrap" },
      },
      { id: "note", header: "Note", cell: ({ row }) => row.original.note || <span className="text-ink-400">—</span>, meta: { className: "max-w-96 text-ink-300" } },
      { id: "author", header: "Author", cell: ({ row }) => row.original.createdByName ?? <span className="text-ink-400">seed</span>, meta: { className: "whitespace-nowrap" } },
      { id: "created", header: "Date", cell: ({ row }) => <span className="num whitespace-nowrap text-ink-300">{formatDateTime(row.original.createdAt)}</span> },
      {
        id: "used",
        header: "Used by",
        cell: ({ row }) => (
          <span className="whitespace-nowrap">
            <span className="num">{row.original.versionCount}</span> profile version{row.original.versionCount === 1 ? "" : "s"}
          </span>
        ),
      },
      { id: "tools", header: "Tools", cell: ({ row }) => <span className="num">{row.original.tools.filter((t) => !t.retiredAt).length}</span>, meta: { className: "text-right", headClassName: "text-right" } },
      {
        id: "actions",
        header: () => <span className="sr-only">Actions</span>,
        cell: ({ row: { original: r } }) =>
          r.id === viewedId ? null : (
            <Button size="sm" onClick={() => onView(r.id)} aria-label={`View revision ${r.revision}`}>
              View
            </Button>
          ),
        meta: { className: "text-right" },
      },
    ],
    [currentId, viewedId, onView],
  );
  const table = useDataTable({ data: revisions, columns, getRowId: (r) => String(r.id) });
  return (
    <Card title="Revisions" description="Newest first. Editing an arm adds a revision; profile versions keep the revision they were saved on and move only by saving a new version.">
      <DataTable table={table} caption="Revisions of the arm, newest first" emptyMessage="No revision." testId="revisions-table" verticalAlign="top" />
    </Card>
  );
}
