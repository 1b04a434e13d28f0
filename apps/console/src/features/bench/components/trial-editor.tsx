import { useMemo, useState } from "react";
import { useFieldArray, useForm, type FieldErrors, type Path, type UseFormRegister } from "react-hook-form";
import { zodResolver } from "@hookform/resolvers/zod";
import { useMutation, useQueryClient } from "@tanstack/react-query";
import { Plus, Trash2 } from "lucide-react";
import { TRIAL_FRAMES, type Arm, type CustomTrial, type TrialDefinition } from "@jogwright/shared";
import { Button } from "../../../components/ui/button.tsx";
import { closeThen, Dialog, DialogFormActions } from "../../../components/ui/dialog.tsx";
import { Message } from "../../../components/ui/message.tsx";
import { NumberField } from "../../../components/ui/number-field.tsx";
import { SelectField } from "../../../components/ui/select-field.tsx";
import { TextAreaField } from "../../../components/ui/text-area-field.tsx";
import { TextField } from "../../../components/ui/text-field.tsx";
import { applyServerIssues } from "../../../lib/server-issues.ts";
import { benchKeys, saveCustomTrial } from "../api/bench-api.ts";
import { NEW_SEGMENT, trialFormCodec, uiPathOfTrialPath, type TrialFormValues, type UiSegment } from "../forms/trial-form-codec.ts";

const AXES = ["x", "y", "z"] as const;
const KIND_LABELS: Record<UiSegment["kind"], string> = { twist: "Constant twist", waypoint: "Move to a waypoint", expression: "Twist as expressions of t" };

/** Reads a nested error message by a dotted path ("segments.0.linear.1"). */
function errorAt(errors: FieldErrors<TrialFormValues>, path: string): string | undefined {
  let node: unknown = errors;
  for (const key of path.split(".")) node = (node as Record<string, unknown> | undefined)?.[key];
  return (node as { message?: string } | undefined)?.message;
}

function Vector({ label, unit, base, register, errors, text }: {
  label: string; unit: string; base: string; register: UseFormRegister<TrialFormValues>; errors: FieldErrors<TrialFormValues>; text?: boolean;
}) {
  return (
    <fieldset className="grid grid-cols-3 gap-2">
      <legend className="mb-1 text-sm font-semibold text-ink-100">{label}</legend>
      {AXES.map((axis, i) => {
        const path = `${base}.${i}` as Path<TrialFormValues>;
        return text ? (
          <TextField key={axis} label={`${label} ${axis}`} spellCheck={false} error={errorAt(errors, path)} {...register(path)} />
        ) : (
          <NumberField key={axis} label={`${label} ${axis}`} unit={unit} step="any" error={errorAt(errors, path)} {...register(path, { valueAsNumber: true })} />
        );
      })}
    </fieldset>
  );
}

/**
 * Compose a custom trial of an arm: a start pose (deg, mm for a sliding joint) and segments — a constant
 * twist, a move to a waypoint at a speed, or a twist as expressions of t with units. Checked as you type with
 * the shared schema; the server then checks the expressions and the arm's limits and puts each problem on
 * its field.
 */
export function TrialEditorDialog({ arm, open, onClose, onSaved, from }: {
  arm: Arm; open: boolean; onClose: () => void; onSaved: (trial: CustomTrial) => void; from: TrialDefinition | null;
}) {
  return (
    <Dialog open={open} onClose={onClose} title="New trial" description={`For ${arm.name}. Saved trials can be run by every engineer.`} className="w-[min(60rem,calc(100vw-2rem))]">
      {open ? <TrialEditorForm arm={arm} onCancel={onClose} onSaved={closeThen(onClose, onSaved)} from={from} /> : null}
    </Dialog>
  );
}

function TrialEditorForm({ arm, onCancel, onSaved, from }: { arm: Arm; onCancel: () => void; onSaved: (trial: CustomTrial) => void; from: TrialDefinition | null }) {
  const jointKinds = useMemo(() => arm.model.joints.map((j) => j.type), [arm]);
  const { codec, toUi } = useMemo(() => trialFormCodec(jointKinds), [jointKinds]);
  const defaults = useMemo(
    () => toUi(from ?? { name: "", description: "", startPose: arm.readyPose, segments: [{ kind: "twist", frame: "world", linearMPerS: [0, 0.05, 0], angularRadPerS: [0, 0, 0], durationS: 2 }] }),
    [toUi, from, arm],
  );
  const { register, control, handleSubmit, setError, formState: { errors } } = useForm<TrialFormValues, unknown, TrialDefinition>({
    resolver: zodResolver(codec),
    mode: "onTouched",
    defaultValues: defaults,
  });
  const segments = useFieldArray({ control, name: "segments" });
  const [messages, setMessages] = useState<string[]>([]);
  const [kindToAdd, setKindToAdd] = useState<UiSegment["kind"]>("twist");
  const queryClient = useQueryClient();
  const save = useMutation({
    mutationFn: (definition: TrialDefinition) => saveCustomTrial(arm.id, definition),
    onSuccess: (trial) => {
      void queryClient.invalidateQueries({ queryKey: benchKeys.trials(arm.id) });
      onSaved(trial);
    },
    onError: (error) =>
      // "definition.segments.0.linear.1" → the form's "segments.0.linear.1".
      setMessages(applyServerIssues(error, (path) => (path.startsWith("definition.") ? (uiPathOfTrialPath(path.slice(11)) as Path<TrialFormValues>) : undefined), setError)),
  });

  return (
    <form
      noValidate
      className="flex flex-col gap-4"
      onSubmit={handleSubmit((definition) => {
        setMessages([]);
        save.mutate(definition);
      })}
    >
      <div className="grid gap-3 md:grid-cols-2">
        <TextField label="Name" error={errors.name?.message} {...register("name")} />
        <TextAreaField label="Description" rows={2} error={errors.description?.message} {...register("description")} />
      </div>
      <fieldset className="grid grid-cols-3 gap-2 md:grid-cols-6">
        <legend className="mb-1 text-sm font-semibold text-ink-100">Start pose</legend>
        {jointKinds.map((kind, i) => (
          <NumberField
            key={i}
            label={`Joint ${i + 1}`}
            unit={kind === "prismatic" ? "mm" : "deg"}
            step="any"
            error={errorAt(errors, `startPose.${i}`)}
            {...register(`startPose.${i}`, { valueAsNumber: true })}
          />
        ))}
      </fieldset>
      {errorAt(errors, "startPose") ? <p className="text-sm text-stop-400">{errorAt(errors, "startPose")}</p> : null}
      <ol className="flex flex-col gap-3">
        {segments.fields.map((field, i) => {
          const kind = field.kind;
          return (
            <li key={field.id} className="flex flex-col gap-2 rounded-lg border border-ink-700 p-3" aria-label={`Segment ${i + 1}`}>
              <div className="flex items-center justify-between">
                <h4 className="text-sm font-semibold text-ink-100">
                  Segment {i + 1}: {KIND_LABELS[kind]}
                </h4>
                <Button size="sm" variant="ghost" disabled={segments.fields.length === 1} onClick={() => segments.remove(i)}>
                  <Trash2 aria-hidden className="size-4" /> Remove
                </Button>
              </div>
              {kind !== "waypoint" ? (
                <SelectField label="Frame" {...register(`segments.${i}.frame` as Path<TrialFormValues>)}>
                  {TRIAL_FRAMES.map((f) => (
                    <option key={f} value={f}>
                      {f === "world" ? "World" : "Tool"}
                    </option>
                  ))}
                </SelectField>
              ) : null}
              {kind === "twist" ? (
                <>
                  <Vector label="Linear" unit="mm/s" base={`segments.${i}.linearMmPerS`} register={register} errors={errors} />
                  <Vector label="Angular" unit="deg/s" base={`segments.${i}.angularDegPerS`} register={register} errors={errors} />
                </>
              ) : kind === "waypoint" ? (
                <>
                  <Vector label="Position" unit="mm" base={`segments.${i}.positionMm`} register={register} errors={errors} />
                  <div className="grid grid-cols-2 gap-2">
                    <NumberField label="Speed" unit="mm/s" step="any" error={errorAt(errors, `segments.${i}.speedMmPerS`)} {...register(`segments.${i}.speedMmPerS` as Path<TrialFormValues>, { valueAsNumber: true })} />
                    <NumberField label="Give up after" unit="s" step="any" error={errorAt(errors, `segments.${i}.timeoutS`)} {...register(`segments.${i}.timeoutS` as Path<TrialFormValues>, { valueAsNumber: true })} />
                  </div>
                </>
              ) : (
                <>
                  <Vector label="Linear" unit="" base={`segments.${i}.linear`} register={register} errors={errors} text />
                  <Vector label="Angular" unit="" base={`segments.${i}.angular`} register={register} errors={errors} text />
                  <p className="text-xs text-ink-400">t is the time since the segment began, in seconds; give units (m/s, mm/s, rad/s, deg/s): 50 mm/s * sin(2 pi t / 4 s).</p>
                </>
              )}
              {kind !== "waypoint" ? (
                <NumberField label="Duration" unit="s" step="any" error={errorAt(errors, `segments.${i}.durationS`)} {...register(`segments.${i}.durationS` as Path<TrialFormValues>, { valueAsNumber: true })} />
              ) : null}
            </li>
          );
        })}
      </ol>
      {errorAt(errors, "segments") ? <p className="text-sm text-stop-400">{errorAt(errors, "segments")}</p> : null}
      <div className="flex items-end gap-2">
        <SelectField label="Add a segment" value={kindToAdd} onChange={(e) => setKindToAdd(e.target.value as UiSegment["kind"])}>
          {(Object.keys(KIND_LABELS) as UiSegment["kind"][]).map((k) => (
            <option key={k} value={k}>
              {KIND_LABELS[k]}
            </option>
          ))}
        </SelectField>
        <Button onClick={() => segments.append(structuredClone(NEW_SEGMENT[kindToAdd]))}>
          <Plus aria-hidden className="size-4" /> Add
        </Button>
      </div>
      {messages.length ? (
        <Message tone="stop" title="The trial was not saved">
          <ul className="list-disc pl-4">
            {messages.map((m) => (
              <li key={m}>{m}</li>
            ))}
          </ul>
        </Message>
      ) : null}
      <DialogFormActions onCancel={onCancel} isPending={save.isPending} submitLabel="Save the trial" pendingLabel="Checking and saving…" />
    </form>
  );
}
