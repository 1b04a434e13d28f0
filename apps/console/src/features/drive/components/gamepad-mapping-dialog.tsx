import { useEffect, useEffectEvent, useState, type ReactNode } from "react";
import type { ColumnDef } from "@tanstack/react-table";
import { useMutation, useQueryClient } from "@tanstack/react-query";
import {
  DEFAULT_GAMEPAD_MAPPING,
  TWIST_TARGETS,
  gamepadMappingSchema,
  type GamepadMapping,
} from "@jogwright/shared";
import { Button } from "../../../components/ui/button.tsx";
import { DataTable, useDataTable } from "../../../components/ui/data-table.tsx";
import { Dialog } from "../../../components/ui/dialog.tsx";
import { FailureMessage, Message } from "../../../components/ui/message.tsx";
import { driveKeys, saveGamepadMapping } from "../api/drive-api.ts";
import { firstGamepad } from "../input/shaping.ts";

// Which stick or button pair drives each twist component, inversion, the device's deadband and expo,
// the enabling and e-stop buttons; saved per user (PUT /api/gamepad-mapping).

const TARGET_LABELS: Record<(typeof TWIST_TARGETS)[number], string> = {
  vx: "X (linear)",
  vy: "Y (linear)",
  vz: "Z (linear)",
  wx: "Rx (turn about x)",
  wy: "Ry (turn about y)",
  wz: "Rz (turn about z)",
};

type Entry = GamepadMapping["axes"][number];
type Target = Entry["target"];
const TARGET_ROWS: Target[] = [...TWIST_TARGETS];
type Capture = { kind: "axis"; target: Entry["target"] } | { kind: "button"; field: "enablingButton" | "estopButton" | `${Entry["target"]}.positive` | `${Entry["target"]}.negative` };

const selectClass = "h-8 rounded-md border border-ink-600 bg-ink-800 px-2 text-sm text-ink-100";
const numberClass = "num h-8 w-16 rounded-md border border-ink-600 bg-ink-800 px-2 text-sm text-ink-100";

/** Waits for a stick pushed past half or a button pressed on the first gamepad. */
function useCapture(capture: Capture | null, onCaptured: (index: number) => void) {
  // Always the latest callback, without restarting the polling when it changes.
  const captured = useEffectEvent(onCaptured);
  useEffect(() => {
    if (!capture) return;
    const start = firstGamepad();
    const restingButtons = start ? start.buttons.map((b) => b.pressed) : [];
    const timer = setInterval(() => {
      const pad = firstGamepad();
      if (!pad) return;
      if (capture.kind === "axis") {
        const index = pad.axes.findIndex((v) => Math.abs(v) > 0.5);
        if (index >= 0) captured(index);
      } else {
        const index = pad.buttons.findIndex((b, i) => b.pressed && !restingButtons[i]);
        if (index >= 0) captured(index);
      }
    }, 30);
    return () => clearInterval(timer);
  }, [capture]);
}

/** A stick or button number with its "Assign" (capture) button beside it. */
function IndexInput({ label, value, max, onChange, children }: { label: string; value: number; max: number; onChange: (index: number) => void; children: ReactNode }) {
  return (
    <span className="flex items-center gap-1">
      <input type="number" min={0} max={max} aria-label={label} className={numberClass} value={value} onChange={(event) => onChange(Number(event.target.value))} />
      {children}
    </span>
  );
}

/** One number of the stick shaping (deadband, expo), from 0 to `max`, labelled on its left. */
function ShapingInput({ label, max, step, value, onChange }: { label: string; max: number; step: number; value: number; onChange: (value: number) => void }) {
  return (
    <label className="flex items-center justify-between gap-2">
      {label}
      <input type="number" min={0} max={max} step={step} className={numberClass} value={value} onChange={(event) => onChange(Number(event.target.value))} />
    </label>
  );
}

const isSameCapture = (a: Capture, b: Capture) => JSON.stringify(a) === JSON.stringify(b);

/** Arms the capture of the next stick movement or button press for one mapping target (press again to cancel). */
function CaptureButton({ target, current, onToggle }: { target: Capture; current: Capture | null; onToggle: (target: Capture) => void }) {
  const isCapturing = current !== null && isSameCapture(current, target);
  return (
    <Button size="sm" variant="ghost" onClick={() => onToggle(target)}>
      {isCapturing ? (target.kind === "axis" ? "Move a stick…" : "Press a button…") : "Assign"}
    </Button>
  );
}

/** The dialog; its form is mounted on each opening, so it starts from the saved mapping with no leftover state. */
export function GamepadMappingDialog({ open, onClose, mapping }: { open: boolean; onClose: () => void; mapping: GamepadMapping }) {
  return (
    <Dialog
      open={open}
      onClose={onClose}
      title="Gamepad mapping"
      description="Saved for your account. Device deadband and expo calibrate the stick; the profile's own shaping applies on top."
      className="w-[min(46rem,calc(100vw-2rem))]"
    >
      {open ? <GamepadMappingForm mapping={mapping} onClose={onClose} /> : null}
    </Dialog>
  );
}

function GamepadMappingForm({ onClose, mapping }: { onClose: () => void; mapping: GamepadMapping }) {
  const [draft, setDraft] = useState<GamepadMapping>(mapping);
  const [capture, setCapture] = useState<Capture | null>(null);
  const queryClient = useQueryClient();
  const save = useMutation({
    mutationFn: saveGamepadMapping,
    onSuccess: (saved) => {
      queryClient.setQueryData(driveKeys.gamepadMapping(), saved);
      onClose();
    },
  });

  const entryFor = (target: Entry["target"]): Entry | undefined => draft.axes.find((a) => a.target === target);
  const setEntry = (target: Entry["target"], entry: Entry | null) =>
    setDraft((d) => ({ ...d, axes: [...d.axes.filter((a) => a.target !== target), ...(entry ? [entry] : [])] }));

  useCapture(capture, (index) => {
    const c = capture;
    setCapture(null);
    if (!c) return;
    if (c.kind === "axis") {
      setEntry(c.target, { target: c.target, source: { kind: "axis", index }, invert: entryFor(c.target)?.invert ?? false });
    } else if (c.field === "enablingButton" || c.field === "estopButton") {
      setDraft((d) => ({ ...d, [c.field]: index }));
    } else {
      const [target, side] = c.field.split(".") as [Entry["target"], "positive" | "negative"];
      const current = entryFor(target);
      const source = current?.source.kind === "buttons" ? current.source : { kind: "buttons" as const, positive: 0, negative: 0 };
      setEntry(target, { target, source: { ...source, [side]: index }, invert: current?.invert ?? false });
    }
  });

  const parsed = gamepadMappingSchema.safeParse(draft);
  const toggleCapture = (c: Capture) => setCapture(capture !== null && isSameCapture(capture, c) ? null : c);
  const indexInput = (label: string, value: number, max: number, captureAs: Capture, onChange: (index: number) => void) => (
    <IndexInput label={label} value={value} max={max} onChange={onChange}>
      <CaptureButton target={captureAs} current={capture} onToggle={toggleCapture} />
    </IndexInput>
  );
  /** A column whose cell edits one motion's entry (undefined while the motion is not mapped). */
  const entryColumn = (id: string, header: string, cell: (target: Target, entry: Entry | undefined) => ReactNode): ColumnDef<Target> => ({
    id,
    header,
    cell: ({ row: { original: target } }) => cell(target, entryFor(target)),
  });
  const columns: ColumnDef<Target>[] = [
    { id: "motion", header: "Motion", meta: { isRowHeader: true }, cell: (c) => TARGET_LABELS[c.row.original] },
    entryColumn("source", "Source", (target, entry) => (
      <select
        aria-label={`${TARGET_LABELS[target]} source`}
        className={selectClass}
        value={entry?.source.kind ?? "none"}
        onChange={(event) => {
          const k = event.target.value;
          const invert = entry?.invert ?? false;
          if (k === "none") setEntry(target, null);
          else if (k === "axis") setEntry(target, { target, source: { kind: "axis", index: 0 }, invert });
          else setEntry(target, { target, source: { kind: "buttons", positive: 12, negative: 13 }, invert });
        }}
      >
        <option value="none">Not used</option>
        <option value="axis">Stick axis</option>
        <option value="buttons">Button pair</option>
      </select>
    )),
    entryColumn("index", "Index", (target, entry) => {
      const source = entry?.source;
      if (!entry || !source) return <span className="text-xs text-ink-400">—</span>;
      if (source.kind === "axis") {
        return indexInput(`${TARGET_LABELS[target]} axis index`, source.index, 15, { kind: "axis", target }, (index) =>
          setEntry(target, { ...entry, source: { kind: "axis", index } }),
        );
      }
      const side = (which: "positive" | "negative") =>
        indexInput(`${TARGET_LABELS[target]} ${which} button`, source[which], 31, { kind: "button", field: `${target}.${which}` }, (index) =>
          setEntry(target, { ...entry, source: { ...source, [which]: index } }),
        );
      return (
        <span className="flex flex-wrap items-center gap-1 text-xs text-ink-300">
          +{side("positive")}−{side("negative")}
        </span>
      );
    }),
    entryColumn("invert", "Invert", (target, entry) => (
      <input
        type="checkbox"
        aria-label={`Invert ${TARGET_LABELS[target]}`}
        className="size-4 accent-iris-400"
        disabled={!entry}
        checked={entry?.invert ?? false}
        onChange={(event) => entry && setEntry(target, { ...entry, invert: event.target.checked })}
      />
    )),
  ];
  const table = useDataTable({ data: TARGET_ROWS, columns, getRowId: (target) => target });
  /** The enabling or e-stop button by number, with its Assign button; an optional one may be left empty ("none"). */
  const buttonRow = (field: "enablingButton" | "estopButton", id: string, label: string, { isOptional = false } = {}) => (
    <div className="flex items-center justify-between gap-2">
      <label htmlFor={id}>{label}</label>
      <span className="flex items-center gap-1">
        <input
          id={id}
          type="number"
          min={0}
          max={31}
          placeholder={isOptional ? "none" : undefined}
          className={numberClass}
          value={draft[field] ?? ""}
          onChange={(event) => setDraft((d) => ({ ...d, [field]: isOptional && event.target.value === "" ? null : Number(event.target.value) }))}
        />
        <CaptureButton target={{ kind: "button", field }} current={capture} onToggle={toggleCapture} />
      </span>
    </div>
  );


  return (
    <form
      className="flex flex-col gap-4"
      onSubmit={(event) => {
        event.preventDefault();
        if (parsed.success) save.mutate(parsed.data);
      }}
    >
      <DataTable table={table} caption="Which stick or button pair drives each motion" emptyMessage="No motions" />
      <div className="grid grid-cols-2 gap-4 text-sm">
        <ShapingInput label="Deadband (%)" max={50} step={1} value={Math.round(draft.deadband * 100)} onChange={(percent) => setDraft((d) => ({ ...d, deadband: percent / 100 }))} />
        <ShapingInput label="Expo (0 linear … 1 cubic)" max={1} step={0.05} value={draft.expo} onChange={(expo) => setDraft((d) => ({ ...d, expo }))} />
        {buttonRow("enablingButton", "enabling-button", "Enabling button (hold to run)")}
        {buttonRow("estopButton", "estop-button", "Emergency-stop button", { isOptional: true })}
      </div>
      <p className="text-xs text-ink-400">
        Standard layout: axes 0/1 left stick x/y, 2/3 right stick x/y; buttons 4/5 bumpers, 6/7 triggers, 12–15 d-pad.
      </p>
      {!parsed.success ? (
        <Message tone="warn">{parsed.error.issues.map((i) => i.message).join("; ")}</Message>
      ) : null}
      <FailureMessage error={save.error} title="Could not save the mapping" />
      <div className="flex justify-between gap-2">
        <Button variant="ghost" onClick={() => setDraft(DEFAULT_GAMEPAD_MAPPING)}>
          Restore defaults
        </Button>
        <div className="flex gap-2">
          <Button onClick={onClose}>Cancel</Button>
          <Button type="submit" variant="primary" disabled={!parsed.success || save.isPending}>
            Save mapping
          </Button>
        </div>
      </div>
    </form>
  );
}
