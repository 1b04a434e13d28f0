import { useRef, type ReactNode } from "react";
import type { Arm, ProfileParams, RecordedFrame } from "@jogwright/shared";
import { cn } from "../../lib/cn.ts";
import type { FrameSource } from "../../lib/frame-trace.ts";
import type { JogSnapshot } from "../../lib/jog-socket.ts";
import { formatFixed } from "../../lib/format.ts";
import { ArmView } from "./arm-view.tsx";
import type { ChartKey } from "./chart-columns.ts";
import { CollapsiblePanel } from "./collapsible-panel.tsx";
import { useFitToViewport } from "./fit-height.ts";
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

/** The first screen's height bounds: never squeezed below a usable view, never stretched on a tall screen. */
const FIT = { minPx: 460, maxPx: 1100, bottomMarginPx: 16 };
/** The chart on the first screen, and the ones below (constants, so the memoised charts do not re-render). */
const FIRST_CHART: readonly ChartKey[] = ["jointRates"];
const MORE_CHARTS: readonly ChartKey[] = ["sigma", "speed"];

/**
 * The 3D view, the controls and panels around it and the charts, for one frame source: the live session, a
 * watched session or a replay. On a wide screen (xl, 1280 px and up) the first screen holds what driving
 * needs at once — the view with one chart (joint rates) under it, `controls` (the jog pad) beside it, and
 * `side` (STOP, enabling) with the motion state and the singularity indicator on the right — and is sized to
 * end at the bottom of the window, the view taking the height the rest leaves (1440×900 fits without
 * scrolling: tests/e2e/drive-layout.spec.ts). Everything else follows below, each panel and chart folding
 * to its title. `header` spans the full width above (the replay's timeline). Narrower, it all stacks.
 */
export function DriveWorkspace({ arm, params, frame, source, controls, side, header }: {
  arm: Arm;
  params: ProfileParams | null;
  frame: RecordedFrame | null;
  source: FrameSource;
  controls?: ReactNode;
  side?: ReactNode;
  header?: ReactNode;
}) {
  const firstScreenRef = useRef<HTMLDivElement>(null);
  useFitToViewport(firstScreenRef, FIT);
  const jointCount = arm.model.joints.length;
  return (
    <div className="flex flex-col gap-4" data-testid="drive-workspace">
      {header}
      <div
        ref={firstScreenRef}
        data-testid="drive-first-screen"
        className={cn(
          "grid grid-cols-1 gap-4",
          controls ? "xl:grid-cols-[minmax(0,1fr)_26rem_19rem]" : "xl:grid-cols-[minmax(0,1fr)_19rem]",
        )}
      >
        <div className="flex min-w-0 flex-col gap-4">
          <ArmView
            arm={arm.model}
            restPose={arm.readyPose}
            source={source}
            className="relative h-[26rem] overflow-hidden rounded-lg border border-ink-700 bg-ink-950 xl:h-auto xl:min-h-56 xl:flex-1 xl:[contain:size]"
          />
          <LiveCharts source={source} jointCount={jointCount} params={params} keys={FIRST_CHART} />
        </div>
        {controls ? <div className="flex min-w-0 flex-col gap-4">{controls}</div> : null}
        <aside className="flex min-w-0 flex-col gap-3" aria-label="Arm state">
          {side}
          <MotionState frame={frame} />
          <SingularityIndicator frame={frame} params={params} />
        </aside>
      </div>
      <section aria-label="More arm state" className="grid grid-cols-1 items-start gap-4 md:grid-cols-2 xl:grid-cols-3">
        <div className="flex min-w-0 flex-col gap-4">
          <CollapsiblePanel id="binding" title="Binding limit">
            <BindingLimit frame={frame} params={params} />
          </CollapsiblePanel>
          <CollapsiblePanel id="tcp" title="TCP">
            <TcpReadout frame={frame} />
          </CollapsiblePanel>
          <CollapsiblePanel id="stopping" title="Stopping">
            <StoppingPanel frame={frame} params={params} />
          </CollapsiblePanel>
        </div>
        <div className="flex min-w-0 flex-col gap-4">
          <CollapsiblePanel id="joint-positions" title="Joint positions">
            <JointPositionBars arm={arm} frame={frame} />
          </CollapsiblePanel>
          <CollapsiblePanel id="joint-rates" title="Joint rates">
            <JointRateBars arm={arm} frame={frame} params={params} />
          </CollapsiblePanel>
        </div>
        <LiveCharts source={source} jointCount={jointCount} params={params} keys={MORE_CHARTS} isCollapsible className="md:col-span-2 xl:col-span-1" />
      </section>
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
