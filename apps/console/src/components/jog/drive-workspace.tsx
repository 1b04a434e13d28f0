import type { ReactNode } from "react";
import type { Arm, ProfileParams, RecordedFrame } from "@jogwright/shared";
import { cn } from "../../lib/cn.ts";
import type { FrameSource } from "../../lib/frame-trace.ts";
import type { JogSnapshot } from "../../lib/jog-socket.ts";
import { formatFixed } from "../../lib/format.ts";
import { ArmView } from "./arm-view.tsx";
import { LiveCharts } from "./live-charts.tsx";
import {
  BindingLimit,
  JointPositionBars,
  JointRateBars,
  MotionState,
  SingularityIndicator,
  StoppingPanel,
  TcpReadout,
} from "./status-panels.tsx";

/**
 * The 3D view, the panels beside it and the charts below, for one frame source: the live session, a
 * watched session or a replay. `controls` goes under the view, `side` above the panels.
 */
export function DriveWorkspace({ arm, params, frame, source, controls, side }: {
  arm: Arm;
  params: ProfileParams | null;
  frame: RecordedFrame | null;
  source: FrameSource;
  controls?: ReactNode;
  side?: ReactNode;
}) {
  return (
    <div className="flex flex-col gap-6">
      <div className="grid grid-cols-1 gap-6 lg:grid-cols-[minmax(0,1fr)_22rem]">
        <div className="flex min-w-0 flex-col gap-4">
          <ArmView arm={arm.model} restPose={arm.readyPose} source={source} />
          {controls}
        </div>
        <aside className="flex flex-col gap-3" aria-label="Arm state">
          {side}
          <MotionState frame={frame} />
          <SingularityIndicator frame={frame} params={params} />
          <BindingLimit frame={frame} params={params} />
          <TcpReadout frame={frame} />
          <StoppingPanel frame={frame} params={params} />
          <JointPositionBars arm={arm} frame={frame} />
          <JointRateBars arm={arm} frame={frame} params={params} />
        </aside>
      </div>
      <LiveCharts source={source} jointCount={arm.model.joints.length} />
    </div>
  );
}

const connectionWords: Record<JogSnapshot["connection"], string> = {
  idle: "Not connected",
  connecting: "Connecting…",
  open: "Connected",
  reconnecting: "Reconnecting…",
  closed: "Disconnected",
};

export function ConnectionState({ snapshot }: { snapshot: JogSnapshot }) {
  const tone = snapshot.connection === "open" ? "ok" : snapshot.connection === "closed" ? "stop" : "warn";
  return (
    <p className="flex items-center gap-2 text-sm text-ink-100" role="status" data-testid="connection-state" data-connection={snapshot.connection}>
      <span
        aria-hidden
        className={cn("inline-block size-2.5 rounded-full", tone === "ok" ? "bg-ok-400" : tone === "warn" ? "bg-warn-400" : "bg-stop-400")}
      />
      {connectionWords[snapshot.connection]}
      {snapshot.connection === "reconnecting" && snapshot.reconnectAttempt > 1 ? (
        <span className="text-xs text-ink-400">(attempt {snapshot.reconnectAttempt})</span>
      ) : null}
      {snapshot.connection === "open" && snapshot.roundTripMs !== null ? (
        <span className="text-xs text-ink-300">
          round trip <span className="num text-ink-100" data-testid="round-trip-ms">{formatFixed(snapshot.roundTripMs, 0)}</span> ms
          {snapshot.inputToStateMs !== null ? (
            <>
              {" "}· input→state <span className="num text-ink-100">{formatFixed(snapshot.inputToStateMs, 0)}</span> ms
            </>
          ) : null}
        </span>
      ) : null}
    </p>
  );
}

/** The plain mark for an engineer's test drive of a version that is not approved. */
export function UnapprovedBanner({ versionNumber, versionState }: { versionNumber: number; versionState: string }) {
  return (
    <div
      role="alert"
      data-testid="unapproved-banner"
      className="rounded-md border-2 border-warn-400 px-4 py-2 text-sm font-bold tracking-wide text-ink-100"
      style={{
        backgroundImage:
          "repeating-linear-gradient(135deg, var(--color-warn-950) 0 14px, var(--color-ink-900) 14px 28px)",
      }}
    >
      UNAPPROVED — engineer test drive of version {versionNumber} ({versionState}). Operators cannot drive this version.
    </div>
  );
}
