import { useMemo, useState } from "react";
import { Link, useNavigate } from "react-router";
import { get, useFieldArray, useForm, useWatch, type Control, type FieldErrors, type UseFormRegister } from "react-hook-form";
import { zodResolver } from "@hookform/resolvers/zod";
import { ArrowLeft, Plus, Save, Trash2 } from "lucide-react";
import type { ArmDetail, User } from "@jogwright/shared";
import { PageHeader } from "../../../components/layout/page-header.tsx";
import { Button, SubmitButton } from "../../../components/ui/button.tsx";
import { Card } from "../../../components/ui/card.tsx";
import { FormFooter, SCROLL_ABOVE_FORM_FOOTER } from "../../../components/ui/form-footer.tsx";
import { Message } from "../../../components/ui/message.tsx";
import { NumberField } from "../../../components/ui/number-field.tsx";
import { QueryStatus } from "../../../components/ui/query-status.tsx";
import { SelectField } from "../../../components/ui/select-field.tsx";
import { TextAreaField } from "../../../components/ui/text-area-field.tsx";
import { TextField } from "../../../components/ui/text-field.tsx";
import { cn } from "../../../lib/cn.ts";
import { describeError, isApiRequestError } from "../../../lib/api-client.ts";
import { asSentence } from "../../../lib/format.ts";
import { useArmDetail } from "../../../lib/queries/arms.ts";
import { applyServerIssues } from "../../../lib/server-issues.ts";
import { armFieldOfPath, armFormCodec, armFormValuesOf, NEW_JOINT, type ArmFormOutput, type ArmFormValues } from "../forms/arm-form-codec.ts";
import { useCreateArm, useEditArm } from "../hooks/use-arm-mutations.ts";
import { DocumentTitle } from "../../../components/layout/document-title.tsx";

/** Where the arm page says what the save did (the router's location state, read once by the arm page). */
export interface ArmSavedState {
  saved: string;
}

const MAX_JOINTS = 12;

/** `/arms/new` and `/arms/:armId/edit`: the arm by form (engineers). Editing always saves a new revision. */
export function ArmFormPage({ armId, user }: { armId: number | null; user: User }) {
  const detail = useArmDetail(armId);
  const isEngineer = user.roles.includes("engineer");
  const back = armId === null ? "/arms" : `/arms/${armId}`;
  return (
    <>
      <DocumentTitle page={armId === null ? "New arm" : `Edit ${detail.data?.arm.name ?? "arm"}`} />
      <Link to={back} className="mb-3 inline-flex items-center gap-1 text-sm font-semibold text-iris-300 hover:underline">
        <ArrowLeft aria-hidden className="size-4" /> {armId === null ? "All arms" : "Back to the arm"}
      </Link>
      <PageHeader
        title={armId === null ? "New arm" : `Edit ${detail.data?.arm.name ?? "arm"}`}
        description="The DH table in mm and deg, each joint's range, rated speed and acceleration, and the base and tool as position (mm) plus roll-pitch-yaw (deg)."
      />
      {!isEngineer ? (
        <Message tone="info" title="Read only">
          Engineers create and edit arms. <Link className="text-iris-300 underline" to={back}>See the arm{armId === null ? "s" : ""}</Link>.
        </Message>
      ) : armId === null ? (
        <ArmForm detail={null} />
      ) : (
        <>
          <QueryStatus query={detail} loading="Loading the arm…" failed="Could not load the arm" />
          {detail.data ? <ArmForm key={detail.data.arm.latestRevisionId} detail={detail.data} /> : null}
        </>
      )}
    </>
  );
}

function ArmForm({ detail }: { detail: ArmDetail | null }) {
  const navigate = useNavigate();
  const isEdit = detail !== null;
  const latest = detail?.revisions[0];
  const create = useCreateArm();
  const edit = useEditArm(detail?.arm.id ?? 0);
  const save = isEdit ? edit : create;
  const resolver = useMemo(() => zodResolver(armFormCodec({ isEdit })), [isEdit]);
  const defaultValues = useMemo(
    () => armFormValuesOf(detail && latest ? { name: detail.arm.name, description: detail.arm.description, model: latest.model } : null),
    [detail, latest],
  );
  const { register, control, handleSubmit, setError, formState } = useForm<ArmFormValues, unknown, ArmFormOutput>({ resolver, mode: "onTouched", defaultValues });
  const joints = useFieldArray({ control, name: "joints" });
  const [feedback, setFeedback] = useState<{ messages: string[]; title: string } | null>(null);
  // Each refusal gets its own key, so the footer moves focus to it again.
  const [attempts, setAttempts] = useState(0);

  const onError = (error: Error) => {
    const unplaced = applyServerIssues<ArmFormValues>(error, (path) => armFieldOfPath(path) as never, setError);
    const isStale = isApiRequestError(error) && error.code === "stale_parent";
    const hasPlaced = isApiRequestError(error) && error.issues.length > unplaced.length;
    setAttempts((n) => n + 1);
    setFeedback({
      title: isStale ? "Not saved: the arm has a newer revision" : "Not saved",
      messages: hasPlaced && unplaced.length === 0 ? ["See the fields marked above."] : [describeError(error), ...unplaced],
    });
  };

  const onSubmit = handleSubmit((out) => {
    setFeedback(null);
    if (detail && latest) {
      edit.mutate(
        { parentRevisionId: latest.id, name: out.name, description: out.description, model: out.model, note: out.note },
        {
          onSuccess: (saved) => {
            const rev = saved.revisions[0]!;
            const n = latest.versionCount;
            const kept = n > 0 ? ` ${n === 1 ? "The profile version" : `The ${n} profile versions`} on revision ${latest.revision} keep${n === 1 ? "s" : ""} driving it.` : "";
            navigate(`/arms/${saved.arm.id}`, { state: { saved: `Saved revision ${rev.revision}: ${asSentence(rev.note)}${kept}` } satisfies ArmSavedState });
          },
          onError,
        },
      );
    } else {
      create.mutate(out, {
        onSuccess: (saved) => navigate(`/arms/${saved.arm.id}`, { state: { saved: `Created ${saved.arm.name}, revision 1.` } satisfies ArmSavedState }),
        onError,
      });
    }
  });

  const errors = formState.errors;
  const errorOf = (path: string): string | undefined => (get(errors, path) as { message?: string } | undefined)?.message;
  const jointsError = errorOf("joints") ?? errorOf("joints.root");

  return (
    <form onSubmit={onSubmit} noValidate className={cn("flex flex-col gap-6", SCROLL_ABOVE_FORM_FOOTER)} aria-label={isEdit ? "Edit arm" : "New arm"}>
      {detail && latest ? (
        <Message tone={latest.versionCount > 0 ? "warn" : "info"} title={`Saving makes revision ${latest.revision + 1}`}>
          {latest.versionCount > 0 ? (
            <>
              Revision {latest.revision} is used by {latest.versionCount} profile version{latest.versionCount === 1 ? "" : "s"}, so it is never changed: they keep driving revision{" "}
              {latest.revision}. A profile moves to the new revision only by saving a new version, which goes through review again.
            </>
          ) : (
            <>No profile version uses revision {latest.revision} yet; the new revision becomes the one new profiles are made on.</>
          )}{" "}
          The tools in service are copied to the new revision.
        </Message>
      ) : null}
      <Card title="Arm">
        <div className="grid gap-4 md:grid-cols-3">
          <TextField label="Name" autoComplete="off" error={errorOf("name")} {...register("name")} />
          <SelectField label="DH convention" error={errorOf("convention")} {...register("convention")}>
            <option value="standard">Standard DH</option>
            <option value="modified">Modified DH (Craig)</option>
          </SelectField>
          <TextAreaField label="Description" className="md:col-span-3" rows={2} error={errorOf("description")} {...register("description")} />
        </div>
      </Card>
      <Card
        title="Joints"
        description="One row per joint, base to flange. Leave a range end, speed or acceleration empty when it is not given (the simulation then takes 4 × the rated speed per second as the acceleration)."
        actions={
          <Button onClick={() => joints.append({ ...NEW_JOINT })} disabled={joints.fields.length >= MAX_JOINTS}>
            <Plus aria-hidden className="size-4" /> Add joint
          </Button>
        }
      >
        <div className="flex flex-col gap-3">
          {jointsError ? <Message tone="stop">{jointsError}</Message> : null}
          {joints.fields.map((field, i) => (
            <JointFields key={field.id} index={i} control={control} register={register} errors={errors} onRemove={joints.fields.length > 1 ? () => joints.remove(i) : undefined} />
          ))}
        </div>
      </Card>
      <Card
        title="Base and tool"
        description={`Roll-pitch-yaw: R = Rz(yaw)·Ry(pitch)·Rx(roll) about the fixed axes. All zeros: none (identity). ${
          isEdit
            ? "A version drives the TCP offset of the tool it names (the tools on the arm's page, copied to the new revision); this tool counts only for a version that names none."
            : "The tool here becomes the arm's first tool, “Flange tool”; more tools are added on the arm's page."
        }`}
      >
        <div className="grid gap-4 lg:grid-cols-2">
          <PoseFields name="base" legend="Base: world → first joint's frame" register={register} errorOf={errorOf} />
          <PoseFields name="tool" legend="Tool: flange → TCP" register={register} errorOf={errorOf} />
        </div>
      </Card>
      <Card title={isEdit ? "What changed" : "Note"}>
        <TextAreaField
          label={isEdit ? "Revision note" : "Note for revision 1"}
          hint={isEdit ? "Required: shown in the revision history and the audit trail." : "Optional: shown in the revision history."}
          error={errorOf("note")}
          {...register("note")}
        />
        <FormFooter
          feedbackKey={feedback ? `refused-${attempts}` : null}
          feedback={
            feedback ? (
              <Message tone="stop" title={feedback.title}>
                <ul>{feedback.messages.map((m) => <li key={m}>{m}</li>)}</ul>
              </Message>
            ) : null
          }
          className="mt-5"
        >
          <SubmitButton icon={Save} isPending={save.isPending} pendingLabel="Saving…">
            {isEdit ? `Save as revision ${(latest?.revision ?? 0) + 1}` : "Create arm"}
          </SubmitButton>
        </FormFooter>
      </Card>
    </form>
  );
}

function JointFields({
  index,
  control,
  register,
  errors,
  onRemove,
}: {
  index: number;
  control: Control<ArmFormValues, unknown, ArmFormOutput>;
  register: UseFormRegister<ArmFormValues>;
  errors: FieldErrors<ArmFormValues>;
  onRemove: (() => void) | undefined;
}) {
  const type = useWatch({ control, name: `joints.${index}.type` });
  const unit = type === "prismatic" ? "mm" : "deg";
  const at = `joints.${index}` as const;
  const errorOf = (key: string): string | undefined => (get(errors, `${at}.${key}`) as { message?: string } | undefined)?.message;
  const number = (key: "aMm" | "alphaDeg" | "dMm" | "thetaDeg" | "min" | "max" | "speed" | "accel", label: string, fieldUnit: string) => (
    <NumberField label={label} unit={fieldUnit} error={errorOf(key)} {...register(`${at}.${key}`, { valueAsNumber: true, deps: key === "max" ? [`${at}.min`] : undefined })} />
  );
  return (
    <fieldset className="rounded-lg border border-ink-700 p-3" data-testid={`joint-fields-${index + 1}`}>
      <legend className="px-1 text-sm font-bold">Joint {index + 1}</legend>
      <div className="grid grid-cols-2 gap-3 md:grid-cols-5">
        <SelectField label="Type" error={errorOf("type")} {...register(`${at}.type`)}>
          <option value="revolute">Revolute</option>
          <option value="prismatic">Prismatic</option>
        </SelectField>
        {number("aMm", "a (link length)", "mm")}
        {number("alphaDeg", "α (link twist)", "deg")}
        {number("dMm", "d (link offset)", "mm")}
        {number("thetaDeg", "θ offset", "deg")}
        {number("min", "Range min", unit)}
        {number("max", "Range max", unit)}
        {number("speed", "Rated speed", `${unit}/s`)}
        {number("accel", "Rated accel.", `${unit}/s²`)}
        <div className="flex items-end justify-end pb-1">
          {onRemove ? (
            <Button variant="ghost" size="sm" onClick={onRemove} aria-label={`Remove joint ${index + 1}`}>
              <Trash2 aria-hidden className="size-3.5" /> Remove
            </Button>
          ) : null}
        </div>
      </div>
    </fieldset>
  );
}

function PoseFields({ name, legend, register, errorOf }: { name: "base" | "tool"; legend: string; register: UseFormRegister<ArmFormValues>; errorOf: (path: string) => string | undefined }) {
  const number = (key: "xMm" | "yMm" | "zMm" | "rollDeg" | "pitchDeg" | "yawDeg", label: string, unit: string) => (
    <NumberField label={label} unit={unit} error={errorOf(`${name}.${key}`)} {...register(`${name}.${key}`, { valueAsNumber: true })} />
  );
  return (
    <fieldset className="rounded-lg border border-ink-700 p-3">
      <legend className="px-1 text-sm font-bold">{legend}</legend>
      <div className="grid grid-cols-3 gap-3">
        {number("xMm", "x", "mm")}
        {number("yMm", "y", "mm")}
        {number("zMm", "z", "mm")}
        {number("rollDeg", "Roll", "deg")}
        {number("pitchDeg", "Pitch", "deg")}
        {number("yawDeg", "Yaw", "deg")}
      </div>
    </fieldset>
  );
}
