import { memo, useState, type KeyboardEvent, type PointerEvent } from "react";
import { Gamepad2, Hand, OctagonX, RotateCcw, Settings2 } from "lucide-react";
import { JOG_FRAME_LABELS, JOG_MODE_LABELS, type LabelMap, type RecordedFrame } from "@jogwright/shared";
import { Button } from "../../../components/ui/button.tsx";
import { cn } from "../../../lib/cn.ts";
import { jogClient } from "../../../lib/jog-socket.ts";
import { jogInput, useJogInput } from "../input/jog-input.ts";
import { Panel } from "../../../components/jog/status-panels.tsx";

// On-screen jog controls. They only call the input controller (which sends through the jog client);
// press-and-hold: pointerdown presses, pointerup / pointercancel / pointerleave / blur release.

const CARTESIAN_LABELS = ["X", "Y", "Z", "Rx", "Ry", "Rz"];

function holdHandlers(press: () => void, release: () => void) {
  return {
    onPointerDown: (event: PointerEvent<HTMLButtonElement>) => {
      if (event.button !== 0 && event.pointerType === "mouse") return;
      event.preventDefault();
      press();
    },
    onPointerUp: release,
    onPointerCancel: release,
    onPointerLeave: release,
    // Only a keyboard hold ends on blur: a finger on another button moves the focus but keeps this held.
    onBlur: (event: React.FocusEvent<HTMLButtonElement>) => {
      if (event.currentTarget.dataset.keyHeld) {
        delete event.currentTarget.dataset.keyHeld;
        release();
      }
    },
    onContextMenu: (event: React.MouseEvent) => event.preventDefault(),
    onKeyDown: (event: KeyboardEvent<HTMLButtonElement>) => {
      if ((event.key === " " || event.key === "Enter") && !event.repeat) {
        event.preventDefault();
        event.currentTarget.dataset.keyHeld = "1";
        press();
      }
    },
    onKeyUp: (event: KeyboardEvent<HTMLButtonElement>) => {
      if (event.key === " " || event.key === "Enter") {
        event.preventDefault();
        delete event.currentTarget.dataset.keyHeld;
        release();
      }
    },
  };
}

function HoldButton({ holdId, axis, direction, label, disabled, isLit }: {
  holdId: string;
  axis: number;
  direction: 1 | -1;
  label: string;
  disabled: boolean;
  isLit: boolean;
}) {
  return (
    <button
      type="button"
      aria-label={`Jog ${label}`}
      disabled={disabled}
      className={cn(
        "h-10 touch-none rounded-md border text-sm font-semibold select-none disabled:cursor-not-allowed disabled:text-ink-600",
        isLit ? "border-iris-400 bg-iris-950 text-iris-300" : "border-ink-600 bg-ink-800 text-ink-100 hover:border-ink-400",
      )}
      {...holdHandlers(
        () => jogInput.pressAxis(holdId, axis, direction),
        () => jogInput.releaseAxis(holdId),
      )}
    >
      {label}
    </button>
  );
}

/** The on-screen enabling control: hold to run. With a mouse, hold Shift instead and click the jog buttons. */
export function EnablingButton({ disabled }: { disabled: boolean }) {
  const input = useJogInput();
  return (
    <button
      type="button"
      disabled={disabled}
      aria-pressed={input.isEnabling}
      data-testid="enabling-control"
      className={cn(
        "flex h-16 w-full touch-none items-center justify-center gap-2 rounded-lg border-2 text-base font-bold select-none disabled:cursor-not-allowed disabled:border-ink-700 disabled:text-ink-600",
        input.isEnabling ? "border-ok-400 bg-ok-950 text-ok-400" : "border-ink-600 bg-ink-800 text-ink-100 hover:border-ink-400",
      )}
      {...holdHandlers(
        () => jogInput.pressEnabling("screen"),
        () => jogInput.releaseEnabling("screen"),
      )}
    >
      <Hand aria-hidden className="size-5" />
      {input.isEnabling ? `Enabled (${input.enablingSources.join(", ")})` : "Hold to enable"}
    </button>
  );
}

/** A choice of one value of a labelled set (labels.ts), its options in the map's order. */
function Segmented<T extends string>({ label, labels, value, onChange, disabled }: {
  label: string;
  labels: LabelMap<T>;
  value: T;
  onChange: (value: T) => void;
  disabled?: boolean;
}) {
  return (
    <div role="radiogroup" aria-label={label} className="inline-flex rounded-md border border-ink-600 bg-ink-800 p-0.5">
      {(Object.keys(labels) as T[]).map((option) => (
        <button
          key={option}
          type="button"
          role="radio"
          aria-checked={value === option}
          disabled={disabled}
          onClick={() => onChange(option)}
          className={cn(
            "h-7 rounded-sm px-3 text-xs font-semibold",
            value === option ? "bg-iris-400 text-ink-950" : "text-ink-300 hover:text-ink-100",
          )}
        >
          {labels[option]}
        </button>
      ))}
    </div>
  );
}

/** A spring-back rate slider: −100 … +100 % of the axis cap while held, back to 0 on release. */
function RateSlider({ axis, label, disabled }: { axis: number; label: string; disabled: boolean }) {
  const [value, setValue] = useState(0);
  const release = () => {
    setValue(0);
    jogInput.setSlider(axis, 0);
  };
  return (
    <label className="grid grid-cols-[2.5rem_1fr_3rem] items-center gap-2 text-xs text-ink-300">
      {label}
      <input
        type="range"
        min={-100}
        max={100}
        step={1}
        value={value}
        disabled={disabled}
        aria-label={`Rate ${label}`}
        className="touch-none accent-iris-400"
        onChange={(event) => {
          const v = Number(event.target.value);
          setValue(v);
          jogInput.setSlider(axis, v / 100);
        }}
        onPointerUp={release}
        onPointerCancel={release}
        onKeyUp={release}
        onBlur={release}
      />
      <span className="num text-right text-ink-100">{value} %</span>
    </label>
  );
}

export const JogControls = memo(function JogControls({ jointCount, disabled, onEditMapping }: { jointCount: number; disabled: boolean; onEditMapping: () => void }) {
  const input = useJogInput();
  const isCartesian = input.mode === "cartesian";
  const labels = isCartesian ? CARTESIAN_LABELS : Array.from({ length: jointCount }, (_, i) => `J${i + 1}`);
  return (
    <Panel title="Jog">
      <div className="flex flex-wrap items-center gap-3">
        <Segmented label="Jog mode" labels={JOG_MODE_LABELS} value={input.mode} onChange={(m) => jogInput.setMode(m)} disabled={disabled} />
        {isCartesian ? (
          <Segmented label="Jog frame" labels={JOG_FRAME_LABELS} value={input.frame} onChange={(f) => jogInput.setFrame(f)} disabled={disabled} />
        ) : null}
        <span className="ml-auto flex items-center gap-2 text-xs text-ink-300" data-testid="gamepad-status">
          <Gamepad2 aria-hidden className={cn("size-4", input.gamepadId ? "text-iris-400" : "text-ink-600")} />
          {input.gamepadId ? `Gamepad: ${input.gamepadId.slice(0, 40)}` : "No gamepad — press a button on it to connect"}
        </span>
        <Button size="sm" variant="ghost" onClick={onEditMapping}>
          <Settings2 aria-hidden className="size-3.5" /> Gamepad mapping
        </Button>
      </div>
      <div className="grid gap-4 lg:grid-cols-[1fr_1fr]">
        <div className="grid grid-cols-4 gap-1.5" role="group" aria-label="Press and hold to jog">
          {labels.map((label, axis) => (
            <AxisPair key={label} axis={axis} label={label} disabled={disabled} value={input.axes[axis] ?? 0} />
          ))}
        </div>
        <div className="flex flex-col gap-1.5" role="group" aria-label="Rate sliders">
          {labels.map((label, axis) => (
            <RateSlider key={`${input.mode}-${label}`} axis={axis} label={label} disabled={disabled} />
          ))}
        </div>
      </div>
      <label className="grid grid-cols-[5rem_1fr_3.5rem] items-center gap-2 text-sm text-ink-100">
        Override
        <input
          type="range"
          min={0}
          max={input.maxOverridePercent}
          step={1}
          value={input.overridePercent}
          disabled={disabled}
          aria-label="Speed override"
          className="accent-iris-400"
          onChange={(event) => jogInput.setOverride(Number(event.target.value))}
        />
        <span className="num text-right" data-testid="override-percent">
          {input.overridePercent} %
        </span>
      </label>
      <p className="text-xs text-ink-400">
        Keyboard: hold <kbd className="num text-ink-300">Shift</kbd> to enable, then W/S ±X, A/D ±Y, R/F ±Z, I/K ±Rx, J/L ±Ry, U/O ±Rz
        (joints 1–6 in joint mode). With a mouse, hold Shift and press a jog button; on a touch screen hold the enabling
        control with one finger.
      </p>
    </Panel>
  );
});

function AxisPair({ axis, label, disabled, value }: { axis: number; label: string; disabled: boolean; value: number }) {
  return (
    <>
      <HoldButton holdId={`screen-${label}-`} axis={axis} direction={-1} label={`−${label}`} disabled={disabled} isLit={value < 0} />
      <HoldButton holdId={`screen-${label}+`} axis={axis} direction={1} label={`+${label}`} disabled={disabled} isLit={value > 0} />
    </>
  );
}

/** The big stop and the commands that appear when relevant. */
export function StopControls({ frame, isDriving, onEndSession }: { frame: RecordedFrame | null; isDriving: boolean; onEndSession: () => void }) {
  const isLatched = frame?.estopLatched ?? false;
  const needsAcknowledge = frame?.guardState === "stopped";
  let moving = false;
  for (const v of frame?.qdot ?? []) if (Math.abs(v) > 1e-4) moving = true;
  return (
    <div className="flex flex-col gap-2">
      <button
        type="button"
        disabled={!isDriving}
        onClick={() => {
          jogInput.releaseAll();
          jogClient.command("estop");
        }}
        className="flex h-20 w-full items-center justify-center gap-3 rounded-lg border-2 border-stop-400 bg-stop-400 text-xl font-bold tracking-wide text-ink-950 hover:brightness-110 disabled:cursor-not-allowed disabled:border-ink-600 disabled:bg-ink-800 disabled:text-ink-600"
      >
        <OctagonX aria-hidden className="size-7" /> STOP
      </button>
      {!isDriving ? (
        <p className="text-xs text-ink-300" data-testid="stop-not-needed">
          No live session: the arm is not moving, so there is nothing to stop.
        </p>
      ) : null}
      {isLatched ? (
        <Button variant="secondary" onClick={() => jogClient.command("reset-estop")} disabled={!isDriving}>
          <RotateCcw aria-hidden className="size-4" /> Reset emergency stop
        </Button>
      ) : null}
      {needsAcknowledge ? (
        <Button variant="primary" onClick={() => jogClient.command("acknowledge")} disabled={!isDriving}>
          Acknowledge — continue through the singular region, damped
        </Button>
      ) : null}
      <div className="grid grid-cols-2 gap-2">
        <Button size="sm" onClick={() => jogClient.command("ready-pose")} disabled={!isDriving || isLatched || moving}>
          Ready pose
        </Button>
        <Button size="sm" variant="ghost" onClick={onEndSession} disabled={!isDriving}>
          End session
        </Button>
      </div>
    </div>
  );
}

