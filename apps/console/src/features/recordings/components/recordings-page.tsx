import { useMemo } from "react";
import { useSearchParams } from "react-router";
import { useQuery } from "@tanstack/react-query";
import type { ColumnDef } from "@tanstack/react-table";
import { ArrowLeft, Play, RefreshCw } from "lucide-react";
import { DEG_PER_RAD, label, type Arm, type Recording, type RecordingSummary } from "@jogwright/shared";
import { PageHeader } from "../../../components/layout/page-header.tsx";
import { Badge } from "../../../components/ui/badge.tsx";
import { Button } from "../../../components/ui/button.tsx";
import { DataTable, useDataTable } from "../../../components/ui/data-table.tsx";
import { ExportLinks } from "../../../components/ui/export-links.tsx";
import { Message } from "../../../components/ui/message.tsx";
import { formatDateTime, formatFixed } from "../../../lib/format.ts";
import { armAtRevision } from "../../../lib/arm-revision.ts";
import { useArmDetail, useArms } from "../../../lib/queries/arms.ts";
import { profileDetailQueryOptions } from "../../../lib/queries/profiles.ts";
import { recordingDetailQueryOptions, recordingListQueryOptions } from "../../../lib/queries/recordings.ts";
import { ReplayPlayer } from "../../../components/jog/replay-player.tsx";
import { QueryStatus } from "../../../components/ui/query-status.tsx";

// The recordings list and the replay of one (?recording=<id>): a timeline to scrub, with the session's
// events marked, and play/pause at a chosen speed, driving the same 3D view, panels and charts as the
// drive page. The heading says who drove which version when.

function durationText(r: Recording): string {
  if (r.summary) return `${formatFixed(r.summary.durationS, 1)} s`;
  if (!r.endedAt) return "running";
  return `${formatFixed((Date.parse(r.endedAt) - Date.parse(r.startedAt)) / 1000, 1)} s`;
}

/** The session's peak |q̈| (the joint with the largest, in deg/s² or mm/s² for a sliding joint), or "". */
function peakAccelText(peaks: readonly number[], arm: Arm | undefined): string {
  let best = -1, bestValue = 0, bestUnit = "";
  peaks.forEach((a, i) => {
    const isPrismatic = arm?.model.joints[i]?.type === "prismatic";
    const value = isPrismatic ? a * 1000 : a * DEG_PER_RAD;
    if (value > bestValue) {
      best = i;
      bestValue = value;
      bestUnit = isPrismatic ? "mm/s²" : "deg/s²";
    }
  });
  return best < 0 ? "" : ` · peak acceleration J${best + 1} ${formatFixed(bestValue, 0)} ${bestUnit}`;
}

/** The longest measured stop (TCP path, time and kind), or "". */
function longestStopText(stops: RecordingSummary["stopsMeasured"]): string {
  let kind = "", m: { maxTimeS: number; maxDistanceM: number } | null = null;
  for (const [k, v] of Object.entries(stops)) {
    if (!m || v.maxDistanceM > m.maxDistanceM) {
      kind = k;
      m = v;
    }
  }
  return m ? ` · longest stop ${formatFixed(m.maxDistanceM * 1000, 1)} mm in ${formatFixed(m.maxTimeS * 1000, 0)} ms (${label("stopKind", kind).toLowerCase()})` : "";
}

function summaryText(r: Recording, arm: Arm | undefined): string {
  const s = r.summary;
  if (!s) return "—";
  const stops = Object.entries(s.stops)
    .filter(([, n]) => n > 0)
    .map(([reason, n]) => `${label("stopReason", reason).toLowerCase()} ×${n}`)
    .join(", ");
  return `max ${formatFixed(s.maxTcpSpeedMPerS * 1000, 0)} mm/s · min σ ${formatFixed(s.minSigma * 1000, 1)} mm · ${formatFixed(s.maxJointRateFraction * 100, 0)} % of a joint cap${peakAccelText(s.peakJointAccel, arm)}${longestStopText(s.stopsMeasured)}${stops ? ` · stops: ${stops}` : ""}${s.droppedFrames > 0 ? ` · ${s.droppedFrames} frames not recorded (the database fell behind)` : ""}`;
}

export function RecordingsPage() {
  const [search, setSearch] = useSearchParams();
  const selected = Number(search.get("recording"));
  const recordings = useQuery(recordingListQueryOptions());
  const arms = useArms();
  if (Number.isInteger(selected) && selected > 0) {
    return <ReplayView recordingId={selected} onBack={() => setSearch({})} />;
  }
  return (
    <>
      <PageHeader title="Recordings" description="Every driven session is recorded. Open one to replay it: scrub the timeline, jump to its stops and limits, or play it at a chosen speed." />
      <QueryStatus query={recordings} loading="Loading recordings…" failed="Could not load the recordings" />
      {recordings.data?.length === 0 ? <Message>No session has been recorded yet.</Message> : null}
      {recordings.data && recordings.data.length > 0 ? (
        <RecordingsTable recordings={recordings.data} arms={arms.data} onReplay={(id) => setSearch({ recording: String(id) })} />
      ) : null}
    </>
  );
}

function RecordingsTable({ recordings, arms, onReplay }: { recordings: Recording[]; arms: Arm[] | undefined; onReplay: (recordingId: number) => void }) {
  const columns = useMemo<ColumnDef<Recording>[]>(
    () => [
      { id: "driver", header: "Driver", cell: ({ row }) => row.original.driverName, meta: { className: "font-mono" } },
      { id: "arm", header: "Arm", cell: ({ row }) => row.original.armName },
      {
        id: "version",
        header: "Profile version",
        cell: ({ row: { original: r } }) => (
          <>
            {r.profileName} <span className="num text-ink-400">v{r.versionNumber}</span>
          </>
        ),
      },
      { id: "started", header: "Started", cell: ({ row }) => formatDateTime(row.original.startedAt), meta: { className: "whitespace-nowrap text-ink-300" } },
      { id: "duration", header: "Duration", cell: ({ row }) => durationText(row.original), meta: { className: "num text-right whitespace-nowrap" } },
      { id: "ended", header: "Ended by", cell: ({ row }) => (row.original.endReason ? label("jogEndReason", row.original.endReason) : <Badge tone="accent">live</Badge>) },
      {
        id: "summary",
        header: "Summary",
        cell: ({ row: { original: r } }) => summaryText(r, arms?.find((a) => a.id === r.armId)),
        meta: { className: "text-xs text-ink-300" },
      },
      {
        id: "actions",
        header: () => <span className="sr-only">Actions</span>,
        cell: ({ row: { original: r } }) => (
          <span className="inline-flex flex-wrap justify-end gap-2">
            <Button size="sm" onClick={() => onReplay(r.id)} aria-label={`Replay recording ${r.id}`}>
              <Play aria-hidden className="size-3.5" /> Replay
            </Button>
            <ExportLinks base={`/api/recordings/${r.id}`} what={`recording ${r.id}`} />
          </span>
        ),
        meta: { className: "text-right" },
      },
    ],
    [arms, onReplay],
  );
  const table = useDataTable({ data: recordings, columns, getRowId: (r) => String(r.id) });
  return <DataTable table={table} caption="Recorded sessions" emptyMessage="No session has been recorded yet." testId="recordings-table" verticalAlign="top" />;
}

/** Who drove, which version and when, in the replay's heading. */
function replayTitle(recordingId: number, r: Pick<Recording, "driverName" | "profileName" | "versionNumber" | "startedAt">): string {
  return `Replay of recording ${recordingId}: ${r.driverName} drove ${r.profileName} v${r.versionNumber} on ${formatDateTime(r.startedAt)}`;
}

function ReplayView({ recordingId, onBack }: { recordingId: number; onBack: () => void }) {
  const detail = useQuery(recordingDetailQueryOptions(recordingId));
  const arms = useArms();
  const recording = detail.data?.recording;
  const listedArm = arms.data?.find((a) => a.id === recording?.armId) ?? null;
  // The revision and tool the recording's version drove (issue 12), as the drive page draws a live session:
  // not the arm's latest revision. The player waits for the revision's detail so it is built once.
  const armDetail = useArmDetail(recording?.armRevisionId != null ? recording.armId : null);
  const isDetailLoading = armDetail.isLoading;
  const arm = useMemo(
    () => (listedArm && !isDetailLoading ? armAtRevision(listedArm, armDetail.data, recording?.armRevisionId, recording?.toolId) : null),
    [listedArm, isDetailLoading, armDetail.data, recording?.armRevisionId, recording?.toolId],
  );
  const profile = useQuery({ ...profileDetailQueryOptions(recording?.profileId ?? null), retry: false });
  const params = profile.data?.versions.find((v) => v.id === recording?.versionId)?.params ?? null;

  return (
    <>
      <PageHeader
        title={recording ? replayTitle(recordingId, recording) : `Replay of recording ${recordingId}`}
        description={
          recording ? (
            <>
              On {recording.armName}
              {recording.armRevision != null ? (
                <span data-testid="replay-arm-revision">
                  {" "}
                  revision <span className="num">{recording.armRevision}</span> with {recording.toolName ?? "the model's own tool"}
                </span>
              ) : null}
              , {recording.endedAt ? `${durationText(recording)} long` : "still being recorded: these are its frames up to when you opened it"}. Scrub the timeline, click a mark to go to that stop, guard or limit, or
              play it at a chosen speed.
            </>
          ) : undefined
        }
        actions={
          <>
            <ExportLinks base={`/api/recordings/${recordingId}`} what={`recording ${recordingId}`} />
            {recording && !recording.endedAt ? (
              <Button variant="secondary" onClick={() => void detail.refetch()} disabled={detail.isFetching}>
                <RefreshCw aria-hidden className="size-4" /> Load the latest frames
              </Button>
            ) : null}
            <Button variant="ghost" onClick={onBack}>
              <ArrowLeft aria-hidden className="size-4" /> All recordings
            </Button>
          </>
        }
      />
      <QueryStatus query={detail} isPending={detail.isPending || arms.isPending} loading="Loading the recording…" failed="Could not load the recording" />
      {detail.data && detail.data.frames.length === 0 ? <Message>This recording has no frames.</Message> : null}
      {detail.data && arm && detail.data.frames.length > 0 ? <ReplayPlayer arm={arm} frames={detail.data.frames} params={params} /> : null}
    </>
  );
}
