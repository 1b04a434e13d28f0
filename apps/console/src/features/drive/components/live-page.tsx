import { useEffect, useState } from "react";
import { useQuery } from "@tanstack/react-query";
import { Eye, OctagonX } from "lucide-react";
import { PageHeader } from "../../../components/layout/page-header.tsx";
import { Badge } from "../../../components/ui/badge.tsx";
import { Button } from "../../../components/ui/button.tsx";
import { Loading } from "../../../components/ui/loading.tsx";
import { Message } from "../../../components/ui/message.tsx";
import { describeError } from "../../../lib/api-client.ts";
import { formatDateTime } from "../../../lib/format.ts";
import { describeEnded, jogClient, mayStopWatchedSession, useJogSnapshot } from "../../../lib/jog-socket.ts";
import { useArms } from "../../arms/hooks/use-arms.ts";
import { liveSessionsQueryOptions } from "../api/drive-api.ts";
import { profileDetailQueryOptions } from "../../../lib/queries/profiles.ts";
import { ConnectionState, DriveWorkspace, UnapprovedBanner } from "./drive-workspace.tsx";

/**
 * Engineers and safety officers watch any live session: same view, no driving controls. A safety officer
 * also gets a STOP, which latches the driver's station (the server checks the role on the message and
 * audits it); only the driver's deliberate reset clears it.
 */
export function LivePage() {
  const snapshot = useJogSnapshot();
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
        {live.isPending ? <Loading label="Loading live sessions…" /> : null}
        {live.isError ? (
          <Message tone="stop" title="Could not load the live sessions">
            {describeError(live.error)}
          </Message>
        ) : null}
        {live.data?.length === 0 ? <Message>Nobody is driving right now.</Message> : null}
        {live.data && live.data.length > 0 ? (
          <div className="overflow-hidden rounded-lg border border-ink-700">
            <table className="w-full text-sm">
              <thead className="bg-ink-800 text-left text-ink-300">
                <tr>
                  <th className="px-3 py-2 font-semibold">Driver</th>
                  <th className="px-3 py-2 font-semibold">Profile</th>
                  <th className="px-3 py-2 font-semibold">Arm</th>
                  <th className="px-3 py-2 font-semibold">Started</th>
                  <th />
                </tr>
              </thead>
              <tbody>
                {live.data.map((s) => (
                  <tr key={s.sessionId} className="border-t border-ink-700 hover:bg-ink-850">
                    <td className="px-3 py-2 font-mono">{s.driverName}</td>
                    <td className="px-3 py-2">
                      {s.profileName} <span className="num text-ink-400">v{s.versionNumber}</span>{" "}
                      {s.isUnapproved ? <Badge tone="warn">unapproved</Badge> : null}
                    </td>
                    <td className="px-3 py-2">{s.armName}</td>
                    <td className="px-3 py-2 text-ink-300">{formatDateTime(s.startedAt)}</td>
                    <td className="px-3 py-2 text-right">
                      <Button
                        size="sm"
                        variant={watchedId === s.sessionId ? "primary" : "secondary"}
                        onClick={() => {
                          setWatchedId(s.sessionId);
                          jogClient.watch(s.sessionId);
                        }}
                      >
                        <Eye aria-hidden className="size-3.5" /> Watch
                      </Button>
                    </td>
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
        ) : null}
        {snapshot.error ? (
          <Message tone="stop" title="The server refused or failed">
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
