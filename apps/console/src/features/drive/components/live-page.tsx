import { useEffect, useMemo, useState } from "react";
import { useQuery, useQueryClient } from "@tanstack/react-query";
import type { ColumnDef } from "@tanstack/react-table";
import type { LiveSession } from "@jogwright/shared";
import { Eye, OctagonX } from "lucide-react";
import { PageHeader } from "../../../components/layout/page-header.tsx";
import { Badge } from "../../../components/ui/badge.tsx";
import { Button } from "../../../components/ui/button.tsx";
import { DataTable, useDataTable } from "../../../components/ui/data-table.tsx";
import { Message } from "../../../components/ui/message.tsx";
import { formatDateTime } from "../../../lib/format.ts";
import { describeEnded, jogClient, jogErrorTitle, mayStopWatchedSession, useJogSnapshot } from "../../../lib/jog-socket.ts";
import { storeSession } from "../../../lib/session.ts";
import { useArms } from "../../../lib/queries/arms.ts";
import { liveSessionsQueryOptions } from "../api/drive-api.ts";
import { profileDetailQueryOptions } from "../../../lib/queries/profiles.ts";
import { ConnectionState, DriveWorkspace, UnapprovedBanner } from "../../../components/jog/drive-workspace.tsx";
import { QueryStatus } from "../../../components/ui/query-status.tsx";

/**
 * Engineers and safety officers watch any live session: same view, no driving controls. A safety officer
 * also gets a STOP, which latches the driver's station (the server checks the role on the message and
 * audits it); only the driver's deliberate reset clears it.
 */
export function LivePage() {
  const snapshot = useJogSnapshot();
  // Signed out (4401): the socket stays closed; the session guard sends the person to sign in.
  const queryClient = useQueryClient();
  const isSignedOut = snapshot.error?.code === "signed_out";
  useEffect(() => {
    if (isSignedOut) storeSession(queryClient, { user: null, hasSignedOut: false });
  }, [isSignedOut, queryClient]);
  const live = useQuery(liveSessionsQueryOptions());
  const arms = useArms();
  const [watchedId, setWatchedId] = useState<string | null>(null);
  const session = snapshot.session;
  const detail = useQuery({ ...profileDetailQueryOptions(session?.profileId ?? null), retry: false });
  const params = detail.data?.versions.find((v) => v.id === session?.versionId)?.params ?? null;
  const arm = arms.data?.find((a) => a.id === session?.armId) ?? null;
  const mayStop = mayStopWatchedSession(snapshot.roles, session);
  const mayStopAny = snapshot.roles.includes("safety_officer");

  useEffect(() => {
    jogClient.connect();
    return () => jogClient.disconnect();
  }, []);

  return (
    <>
      <PageHeader
        title="Live sessions"
        description={
          mayStopAny
            ? "Watch a session while it runs. Nothing here moves the arm; as safety officer you can STOP it, which latches the driver's station until the driver resets it."
            : "Watch a session while it runs. Read-only: nothing here can move or stop the arm."
        }
        actions={<ConnectionState snapshot={snapshot} />}
      />
      <div className="flex flex-col gap-4">
        <QueryStatus query={live} loading="Loading live sessions…" failed="Could not load the live sessions" />
        {live.data?.length === 0 ? <Message>Nobody is driving right now.</Message> : null}
        {live.data && live.data.length > 0 ? (
          <LiveSessionsTable sessions={live.data} watchedId={watchedId} onWatch={(sessionId) => {
            setWatchedId(sessionId);
            jogClient.watch(sessionId);
          }} />
        ) : null}
        {snapshot.error ? (
          <Message tone="stop" title={jogErrorTitle(snapshot.error.code)}>
            {snapshot.error.message}
          </Message>
        ) : null}
        {snapshot.ended ? <Message title="The watched session ended">{describeEnded(snapshot.ended)}</Message> : null}
        {session?.isUnapproved ? <UnapprovedBanner versionNumber={session.versionNumber} versionState={session.versionState} /> : null}
        {session && arm ? (
          <>
            <p className="text-sm text-ink-300">
              Watching <span className="font-mono text-ink-100">{session.driverName}</span> drive {session.profileName}, version{" "}
              <span className="num">{session.versionNumber}</span>, on {session.armName}.
            </p>
            {mayStop ? <WatchedStop isLatched={snapshot.state?.estopLatched ?? false} driverName={session.driverName} /> : null}
            <DriveWorkspace arm={arm} params={params} frame={snapshot.state} source={jogClient} />
          </>
        ) : null}
      </div>
    </>
  );
}

function LiveSessionsTable({ sessions, watchedId, onWatch }: { sessions: LiveSession[]; watchedId: string | null; onWatch: (sessionId: string) => void }) {
  const columns = useMemo<ColumnDef<LiveSession>[]>(
    () => [
      { id: "driver", header: "Driver", cell: ({ row }) => row.original.driverName, meta: { className: "font-mono" } },
      {
        id: "profile",
        header: "Profile",
        cell: ({ row: { original: s } }) => (
          <>
            {s.profileName} <span className="num text-ink-400">v{s.versionNumber}</span> {s.isUnapproved ? <Badge tone="warn">unapproved</Badge> : null}
          </>
        ),
      },
      { id: "arm", header: "Arm", cell: ({ row }) => row.original.armName },
      { id: "started", header: "Started", cell: ({ row }) => formatDateTime(row.original.startedAt), meta: { className: "text-ink-300" } },
      {
        id: "actions",
        header: () => <span className="sr-only">Actions</span>,
        cell: ({ row: { original: s } }) => (
          <Button size="sm" variant={watchedId === s.sessionId ? "primary" : "secondary"} onClick={() => onWatch(s.sessionId)}>
            <Eye aria-hidden className="size-3.5" /> Watch
          </Button>
        ),
        meta: { className: "text-right" },
      },
    ],
    [watchedId, onWatch],
  );
  const table = useDataTable({ data: sessions, columns, getRowId: (s) => s.sessionId });
  return <DataTable table={table} caption="Live sessions" emptyMessage="Nobody is driving right now." testId="live-sessions" />;
}

/**
 * The safety officer's STOP for the watched session. The latch shows in the frames (the same ones the
 * driver sees); it is not an emergency-stop device (ISO 13850): a browser and a network are never part of
 * a safety function.
 */
function WatchedStop({ isLatched, driverName }: { isLatched: boolean; driverName: string }) {
  return (
    <div className="flex items-center gap-4">
      <button
        type="button"
        onClick={() => jogClient.stopWatchedSession()}
        className="flex h-16 w-56 items-center justify-center gap-3 rounded-lg border-2 border-stop-400 bg-stop-400 text-lg font-bold tracking-wide text-ink-950 hover:brightness-110"
      >
        <OctagonX aria-hidden className="size-6" /> STOP
      </button>
      <p className="text-sm text-ink-300" aria-live="polite">
        {isLatched
          ? `Stopped: ${driverName}'s station is latched until ${driverName} resets it.`
          : `Halts ${driverName}'s arm at once and latches their station; recorded in the audit log under your name.`}
      </p>
    </div>
  );
}
