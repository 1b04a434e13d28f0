import { ratedJointAccel } from "@jogwright/kinematics";
import { DEG_PER_RAD, GUARD_STATE_LABELS, STOP_KIND_LABELS, STOP_KINDS } from "@jogwright/shared";
import type { ReactNode } from "react";
import type { Arm, ArmJoint, ProfileParams, RecordedFrame, StopKind } from "@jogwright/shared";
import { cn } from "../../lib/cn.ts";
import { formatFixed } from "../../lib/format.ts";
import { bindingInWords, motionInWords, type MotionTone } from "./limit-words.ts";

// The panels beside the 3D view. They take a frame (live or replayed) and the profile version's
// parameters; SI in, mm / deg / deg/s out.


export function Panel({ title, children, className }: { title: string; children: ReactNode; className?: string }) {
  return (
    <section aria-label={title} className={cn("flex flex-col gap-2 rounded-lg border border-ink-700 bg-ink-850 p-3", className)}>
      <h2 className="text-xs font-semibold tracking-wide text-ink-300 uppercase">{title}</h2>
      {children}
    </section>
  );
}

const toneText: Record<MotionTone, string> = {
  ok: "text-ok-400",
  warn: "text-warn-400",
  stop: "text-stop-400",
  neutral: "text-ink-100",
};
const toneBox: Record<MotionTone, string> = {
  ok: "border-ok-400/60 bg-ok-950",
  warn: "border-warn-400/60 bg-warn-950",
  stop: "border-stop-400/60 bg-stop-950",
  neutral: "border-ink-600 bg-ink-850",
};

const toneDot: Record<MotionTone, string> = { ok: "bg-ok-400", warn: "bg-warn-400", stop: "bg-stop-400", neutral: "bg-ink-400" };

export function MotionState({ frame }: { frame: RecordedFrame | null }) {
  const { text, tone } = motionInWords(frame);
  return (
    <p
      role="status"
      data-testid="motion-state"
      data-tone={tone}
      className={cn("rounded-md border px-3 py-2 text-sm font-semibold text-ink-100", toneBox[tone])}
    >
      <span className={cn("mr-2 inline-block size-2 rounded-full align-middle", toneDot[tone])} aria-hidden />
      {text}
    </p>
  );
}

/** The threshold σ_min is compared against: ε of the singular-value schedule, else the guard threshold. */
export function singularityThresholdM(params: ProfileParams | null): number | null {
  if (!params) return null;
  return params.damping.kind === "singular-value" ? params.damping.epsilonM : params.guard.sigmaStopM;
}

/**
 * The indicator's headline. The guard's own state comes first — held, backing out, passing through — so
 * the headline and the guard row below it never contradict each other (a hold happens just outside
 * σ_stop, where σ alone would read "inside the damped region" or even "clear"); otherwise σ_min against
 * σ_stop and ε.
 */
export function singularityInWords(
  frame: Pick<RecordedFrame, "sigmaMin" | "guardState"> | null, epsilonM: number | null, stopM: number | null,
): { label: string; tone: MotionTone } {
  if (!frame) return { label: "—", tone: "neutral" };
  const sigma = frame.sigmaMin;
  switch (frame.guardState) {
    case "stopped":
      return { label: "Held at the guard — acknowledge, or back out", tone: "stop" };
    case "backing-out":
      return { label: "Backing out of the guard zone", tone: "warn" };
    case "acknowledged":
      return { label: "Passing through, damped (acknowledged)", tone: "warn" };
    default:
      if (stopM !== null && sigma < stopM) return { label: "Inside the guard zone", tone: "stop" };
      if (epsilonM !== null && sigma < epsilonM) return { label: "Inside the damped region", tone: "warn" };
      return { label: "Clear of singularities", tone: "ok" };
  }
}

export function SingularityIndicator({ frame, params }: { frame: RecordedFrame | null; params: ProfileParams | null }) {
  const epsilon = singularityThresholdM(params);
  const stop = params?.guard.policy === "stop-before" ? params.guard.sigmaStopM : null;
  const sigma = frame?.sigmaMin ?? null;
  // Scale: 0 … 3ε (or 0.15 m without a profile); σ beyond it pins the marker at the right end.
  const full = epsilon ? 3 * epsilon : 0.15;
  const at = (v: number) => `${Math.min(100, Math.max(0, (v / full) * 100))}%`;
  const { label, tone } = singularityInWords(frame, epsilon, stop);
  return (
    <Panel title="Singularity">
      <div className="flex items-baseline justify-between gap-2">
        <span className={cn("text-sm font-semibold", toneText[tone])} data-testid="singularity-state" data-tone={tone}>
          {label}
        </span>
        <span className="num text-sm text-ink-100">
          σ<sub>min</sub> {sigma === null ? "—" : formatFixed(sigma * 1000, 1)} <span className="text-ink-400">mm</span>
        </span>
      </div>
      <div className="relative h-3 rounded-sm bg-ink-800" aria-hidden>
        {epsilon !== null ? <div className="absolute inset-y-0 left-0 rounded-l-sm bg-warn-950" style={{ width: at(epsilon) }} /> : null}
        {stop !== null ? <div className="absolute inset-y-0 left-0 rounded-l-sm bg-stop-950" style={{ width: at(stop) }} /> : null}
        {epsilon !== null ? <div className="absolute inset-y-0 w-px bg-warn-400" style={{ left: at(epsilon) }} /> : null}
        {stop !== null ? <div className="absolute inset-y-0 w-px bg-stop-400" style={{ left: at(stop) }} /> : null}
        {sigma !== null ? (
          <div className="absolute -inset-y-0.5 w-1 -translate-x-1/2 rounded-sm bg-ink-100" style={{ left: at(sigma) }} />
        ) : null}
      </div>
      <dl className="grid grid-cols-2 gap-x-3 text-xs text-ink-300">
        <dt>ε (damping region)</dt>
        <dd className="num text-right text-ink-100">{epsilon === null ? "—" : `${formatFixed(epsilon * 1000, 1)} mm`}</dd>
        <dt>λ now</dt>
        <dd className="num text-right text-ink-100">{frame ? `${formatFixed(frame.lambda * 1000, 1)} mm` : "—"}</dd>
        <dt>Guard</dt>
        <dd className="text-right text-ink-100" data-testid="guard-state" data-state={frame?.guardState ?? ""}>
          {frame ? GUARD_STATE_LABELS[frame.guardState] : "—"}
          {stop !== null ? <span className="num text-ink-400"> (stops at {formatFixed(stop * 1000, 1)} mm)</span> : null}
        </dd>
        <dt>Manipulability w</dt>
        <dd className="num text-right text-ink-100">{frame ? formatFixed(frame.manipulability * 1e3, 2) : "—"}<span className="text-ink-400"> ×10⁻³ m³</span></dd>
      </dl>
    </Panel>
  );
}

export function BindingLimit({ frame, params }: { frame: RecordedFrame | null; params: ProfileParams | null }) {
  const text = frame ? bindingInWords(frame, params) : "—";
  const tone: MotionTone = !frame || frame.binding === "none" ? "neutral" : frame.binding === "singularity-guard" ? "stop" : "warn";
  return (
    <Panel title="Binding limit">
      <p className={cn("text-sm font-semibold", toneText[tone])} data-testid="binding-limit">
        {text}
      </p>
      {frame && frame.warnings.length > 0 ? (
        <ul className="flex flex-col gap-1 text-xs text-warn-400">
          {frame.warnings.map((w) => (
            <li key={w}>{w}</li>
          ))}
        </ul>
      ) : null}
    </Panel>
  );
}

export function TcpReadout({ frame }: { frame: RecordedFrame | null }) {
  const p = frame?.pose;
  const speed = (t: readonly number[] | undefined) => (t ? formatFixed(Math.hypot(t[0]!, t[1]!, t[2]!) * 1000, 0) : "—");
  return (
    <Panel title="TCP">
      <dl className="grid grid-cols-3 gap-x-3 text-xs text-ink-300" data-testid="tcp-readout">
        {(["x", "y", "z"] as const).map((axis, i) => (
          <div key={axis} className="flex flex-col">
            <dt>{axis} (mm)</dt>
            <dd className="num text-sm text-ink-100" data-testid={`tcp-${axis}`}>
              {p ? formatFixed(p[4 * i + 3]! * 1000, 1) : "—"}
            </dd>
          </div>
        ))}
      </dl>
      <p className="text-xs text-ink-300">
        Speed commanded <span className="num text-ink-100">{speed(frame?.twistCommanded)}</span> · achieved{" "}
        <span className="num text-ink-100">{speed(frame?.twistAchieved)}</span> <span className="text-ink-400">mm/s</span>
      </p>
    </Panel>
  );
}

/** The operator-facing name of each kind of stop (the shared labels: the e-stop's simulated behaviour named for what it is). */
export const STOP_KIND_WORDS: Readonly<Record<StopKind, string>> = STOP_KIND_LABELS;

const ms = (s: number) => formatFixed(s * 1000, 0);
const mm = (m: number) => formatFixed(m * 1000, 1);

/**
 * Stopping time and distance: the stop in progress, or what releasing the enabling control now would take,
 * and the prediction for each kind of stop from the current motion (the watchdog's includes its wait).
 */
export function StoppingPanel({ frame, params }: { frame: RecordedFrame | null; params: ProfileParams | null }) {
  const s = frame?.stopping ?? null;
  const isHalt = s?.kind === "instant-halt" && s.isActive;
  const tone: MotionTone = !s ? "neutral" : isHalt ? "stop" : s.isActive ? "warn" : "neutral";
  const headline = !s
    ? "—"
    : isHalt
      ? "Instant halt (simulation): joint rates zeroed"
      : s.isActive
        ? `${STOP_KIND_WORDS[s.kind]}: stopping, ${ms(s.timeS)} ms and ${mm(s.distanceM)} mm to go`
        : `If released now: ${ms(s.timeS)} ms, ${mm(s.distanceM)} mm`;
  return (
    <Panel title="Stopping">
      <p className={cn("text-sm font-semibold", toneText[tone])} data-testid="stopping-state" data-kind={s?.kind ?? ""} data-active={s?.isActive ? "true" : "false"}>
        {headline}
      </p>
      <dl className="grid grid-cols-[1fr_auto_auto] gap-x-3 text-xs text-ink-300" data-testid="stop-predictions">
        {STOP_KINDS.map((kind) => {
          const p = frame?.stopPredictions[kind];
          return (
            <div key={kind} className="contents">
              <dt>
                {STOP_KIND_WORDS[kind]}
                {kind === "watchdog" && params ? <span className="text-ink-400"> incl. {params.watchdogMs} ms wait</span> : null}
              </dt>
              <dd className="num text-right text-ink-100">{p ? `${ms(p.timeS)} ms` : "—"}</dd>
              <dd className="num text-right text-ink-100">{p ? `${mm(p.distanceM)} mm` : "—"}</dd>
            </div>
          );
        })}
      </dl>
      <p className="text-xs text-ink-400">Predicted from the current motion. The simulated halt is not an emergency-stop function.</p>
    </Panel>
  );
}

/** A joint's values as the panels show them: degrees for a revolute joint, millimetres for a prismatic one (`k` from SI). */
type JointScale = { k: number; unit: "deg" | "mm" };
const jointScale = (joint: ArmJoint): JointScale =>
  joint.type === "revolute" ? { k: DEG_PER_RAD, unit: "deg" } : { k: 1000, unit: "mm" };

/**
 * One row per joint of the arm — J1, J2, …, a bar and a reading — in a grid whose `columns` fit the reading.
 * `row` draws the bar and the reading of joint `i` in its display scale.
 */
function JointRows({
  arm,
  testId,
  columns,
  row,
}: {
  arm: Arm;
  testId: string;
  columns: "grid-cols-[2rem_1fr_4.5rem]" | "grid-cols-[2rem_1fr_6.5rem]";
  row: (joint: ArmJoint, i: number, scale: JointScale) => { bar: ReactNode; reading: ReactNode };
}) {
  return (
    <ul className="flex flex-col gap-1.5" data-testid={testId}>
      {arm.model.joints.map((joint, i) => {
        const { bar, reading } = row(joint, i, jointScale(joint));
        return (
          <li key={i} className={cn("grid items-center gap-2 text-xs", columns)}>
            <span className="text-ink-300">J{i + 1}</span>
            {bar}
            {reading}
          </li>
        );
      })}
    </ul>
  );
}

export function JointPositionBars({ arm, frame }: { arm: Arm; frame: RecordedFrame | null }) {
  return (
    <Panel title="Joint positions">
      <JointRows
        arm={arm}
        testId="joint-positions"
        columns="grid-cols-[2rem_1fr_4.5rem]"
        row={(joint, i, { k, unit }) => {
          const q = frame?.q[i];
          const min = joint.min ?? -Math.PI;
          const max = joint.max ?? Math.PI;
          const fraction = q === undefined ? null : (q - min) / (max - min);
          const isNearLimit = fraction !== null && (fraction < 0.05 || fraction > 0.95);
          const isBinding = frame?.binding === "joint-limit" && frame.bindingJoint === i;
          return {
            bar: (
              <div
                className="relative h-2.5 rounded-sm bg-ink-800"
                title={`range ${formatFixed(min * k, 0)} … ${formatFixed(max * k, 0)} ${unit}`}
                aria-hidden
              >
                <div className="absolute inset-y-0 left-1/2 w-px bg-ink-600" style={{ left: `${(-min / (max - min)) * 100}%` }} />
                {fraction !== null ? (
                  <div
                    className={cn("absolute -inset-y-0.5 w-1 -translate-x-1/2 rounded-sm", isBinding || isNearLimit ? "bg-warn-400" : "bg-iris-400")}
                    style={{ left: `${Math.min(100, Math.max(0, fraction * 100))}%` }}
                  />
                ) : null}
              </div>
            ),
            reading: (
              <span className="num text-right text-ink-100" data-testid={`joint-${i + 1}-position`}>
                {q === undefined ? "—" : formatFixed(q * k, 1)}
                <span className="text-ink-400"> {unit === "deg" ? "°" : unit}</span>
              </span>
            ),
          };
        }}
      />
      <p className="text-xs text-ink-400">Bars span each joint's range; amber within 5 % of a limit.</p>
    </Panel>
  );
}

export function JointRateBars({ arm, frame, params }: { arm: Arm; frame: RecordedFrame | null; params: ProfileParams | null }) {
  return (
    <Panel title="Joint rates">
      <JointRows
        arm={arm}
        testId="joint-rates"
        columns="grid-cols-[2rem_1fr_6.5rem]"
        row={(joint, i, { k }) => {
          const cap = params?.jointRateCapsRadPerS[i] ?? joint.maxSpeed ?? 1;
          const v = frame?.qdot[i] ?? 0;
          const fraction = Math.min(1, Math.abs(v) / cap);
          const isBinding = frame?.binding === "joint-rate" && frame.bindingJoint === i;
          return {
            bar: (
              <div className="relative h-2.5 rounded-sm bg-ink-800" aria-hidden>
                <div className="absolute inset-y-0 left-1/2 w-px bg-ink-600" />
                <div
                  className={cn("absolute inset-y-0", isBinding || fraction > 0.98 ? "bg-warn-400" : "bg-iris-400")}
                  style={v >= 0 ? { left: "50%", width: `${fraction * 50}%` } : { right: "50%", width: `${fraction * 50}%` }}
                />
              </div>
            ),
            reading: (
              <span className="num text-right text-ink-100">
                {formatFixed(v * k, 0)}
                <span className="text-ink-400"> / {formatFixed(cap * k, 0)}</span>
              </span>
            ),
          };
        }}
      />
      <p className="text-xs text-ink-400">{arm.model.joints.every((j) => j.type === "revolute") ? "deg/s" : "deg/s or mm/s"} against each joint's cap.</p>
      <PeakAcceleration arm={arm} frame={frame} params={params} />
    </Panel>
  );
}

/**
 * The largest |q̈_i| since the previous frame, as a fraction of that joint's limit (the profile's fraction of
 * its rated acceleration: the arm's maxAccel, or the kinematics default from maxSpeed).
 */
function PeakAcceleration({ arm, frame, params }: { arm: Arm; frame: RecordedFrame | null; params: ProfileParams | null }) {
  const peaks = frame?.jointAccelPeak ?? [];
  let worst = -1, worstFraction = 0;
  peaks.forEach((a, i) => {
    const joint = arm.model.joints[i];
    if (!joint) return;
    const limit = ratedJointAccel(joint) * (params?.jointAccelFraction ?? 1);
    const f = Number.isFinite(limit) && limit > 0 ? a / limit : 0;
    if (worst < 0 || f > worstFraction) {
      worst = i;
      worstFraction = f;
    }
  });
  if (worst < 0) return <p className="text-xs text-ink-300" data-testid="peak-acceleration">Peak acceleration —</p>;
  const joint = arm.model.joints[worst]!;
  const k = joint.type === "revolute" ? DEG_PER_RAD : 1000;
  const unit = joint.type === "revolute" ? "deg/s²" : "mm/s²";
  const limit = ratedJointAccel(joint) * (params?.jointAccelFraction ?? 1);
  return (
    <p className="text-xs text-ink-300" data-testid="peak-acceleration">
      Peak acceleration J{worst + 1}{" "}
      <span className={cn("num", worstFraction > 0.98 ? "text-warn-400" : "text-ink-100")}>{formatFixed(peaks[worst]! * k, 0)}</span>
      {Number.isFinite(limit) ? <span className="num text-ink-400"> / {formatFixed(limit * k, 0)}</span> : null} {unit}
    </p>
  );
}
