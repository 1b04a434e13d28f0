import { useEffect, useState } from "react";
import { useQuery } from "@tanstack/react-query";
import { Eye } from "lucide-react";
import { PageHeader } from "../../../components/layout/page-header.tsx";
import { Badge } from "../../../components/ui/badge.tsx";
import { Button } from "../../../components/ui/button.tsx";
import { Loading } from "../../../components/ui/loading.tsx";
import { Message } from "../../../components/ui/message.tsx";
import { describeError } from "../../../lib/api-client.ts";
import { formatDateTime } from "../../../lib/format.ts";
import { jogClient, useJogSnapshot } from "../../../lib/jog-socket.ts";
import { useArms } from "../../arms/hooks/use-arms.ts";
import { liveSessionsQueryOptions, profileDetailQueryOptions } from "../api/drive-api.ts";
import { ConnectionState, DriveWorkspace, UnapprovedBanner } from "./drive-workspace.tsx";

/** Engineers and safety officers watch any live session read-only: same view, no controls. */
export function LivePage() {
  const snapshot = useJogSnapshot();
  const live = useQuery(liveSessionsQueryOptions());
  const arms = useArms();
  const [watchedId, setWatchedId] = useState<string | null>(null);
  const session = snapshot.session;
  const detail = useQuery({ ...profileDetailQueryOptions(session?.profileId ?? 0), enabled: session !== null, retry: false });
  const params = detail.data?.versions.find((v) => v.id === session?.versionId)?.params ?? null;
  const arm = arms.data?.find((a) => a.id === session?.armId) ?? null;

  useEffect(() => {
    jogClient.connect();
    return () => jogClient.disconnect();
  }, []);

  return (
    <>
      <PageHeader
        title="Live sessions"
        description="Watch a session while it runs. Read-only: nothing here can move or stop the arm."
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
        {snapshot.ended ? <Message title="The watched session ended">{snapshot.ended.reason}.</Message> : null}
        {session?.isUnapproved ? <UnapprovedBanner versionNumber={session.versionNumber} versionState={session.versionState} /> : null}
        {session && arm ? (
          <>
            <p className="text-sm text-ink-300">
              Watching <span className="font-mono text-ink-100">{session.driverName}</span> drive {session.profileName}, version{" "}
              <span className="num">{session.versionNumber}</span>, on {session.armName}.
            </p>
            <DriveWorkspace arm={arm} params={params} frame={snapshot.state} source={jogClient} />
          </>
        ) : null}
      </div>
    </>
  );
}
