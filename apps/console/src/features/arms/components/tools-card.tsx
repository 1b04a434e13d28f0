import { useMemo, useState } from "react";
import { useForm } from "react-hook-form";
import { zodResolver } from "@hookform/resolvers/zod";
import type { ColumnDef } from "@tanstack/react-table";
import { Archive, Pencil, Plus } from "lucide-react";
import type { ArmRevision, Tool, ToolInput } from "@jogwright/shared";
import { Badge } from "../../../components/ui/badge.tsx";
import { Button } from "../../../components/ui/button.tsx";
import { Card } from "../../../components/ui/card.tsx";
import { DataTable, useDataTable } from "../../../components/ui/data-table.tsx";
import { Dialog, DialogFormActions } from "../../../components/ui/dialog.tsx";
import { FailureMessage, Message } from "../../../components/ui/message.tsx";
import { NumberField } from "../../../components/ui/number-field.tsx";
import { TextAreaField } from "../../../components/ui/text-area-field.tsx";
import { TextField } from "../../../components/ui/text-field.tsx";
import { describeError, isApiRequestError } from "../../../lib/api-client.ts";
import { formatDateTime, formatFixed } from "../../../lib/format.ts";
import { applyServerIssues } from "../../../lib/server-issues.ts";
import { toolFieldOfPath, toolFormCodec, toolFormValuesOf, type ToolFormValues } from "../forms/tool-form-codec.ts";
import { useRetireTool, useSaveTool } from "../hooks/use-arm-mutations.ts";
import { toolPoseText } from "./pose-facts.tsx";

/** The tools of one arm revision: TCP offset, mass, note, in service or retired; engineers add, change and retire them. */
export function ToolsCard({ armId, revision, isEngineer }: { armId: number; revision: ArmRevision; isEngineer: boolean }) {
  const [editing, setEditing] = useState<Tool | "new" | null>(null);
  const [retiring, setRetiring] = useState<Tool | null>(null);
  const columns = useMemo<ColumnDef<Tool>[]>(
    () => [
      { id: "name", header: "Name", cell: ({ row }) => row.original.name, meta: { isRowHeader: true, className: "font-semibold" } },
      { id: "tcp", header: "TCP offset from the flange", cell: ({ row }) => toolPoseText(row.original.positionM, row.original.rpyRad), meta: { className: "whitespace-nowrap" } },
      {
        id: "mass",
        header: "Mass",
        cell: ({ row }) => (
          <>
            <span className="num">{formatFixed(row.original.massKg, 2)}</span> <span className="text-xs text-ink-400">kg</span>
          </>
        ),
        meta: { className: "text-right whitespace-nowrap", headClassName: "text-right" },
      },
      { id: "note", header: "Note", cell: ({ row }) => row.original.note || <span className="text-ink-400">—</span>, meta: { className: "max-w-72 text-ink-300" } },
      {
        id: "status",
        header: "Status",
        cell: ({ row: { original: t } }) =>
          t.retiredAt ? (
            <span className="flex flex-col">
              <Badge>Retired</Badge>
              <span className="num text-xs text-ink-400">{formatDateTime(t.retiredAt)}</span>
            </span>
          ) : (
            <Badge tone="ok">In service</Badge>
          ),
      },
      ...(isEngineer
        ? [
            {
              id: "actions",
              header: () => <span className="sr-only">Actions</span>,
              cell: ({ row: { original: t } }) =>
                t.retiredAt ? null : (
                  <span className="flex justify-end gap-2">
                    <Button size="sm" onClick={() => setEditing(t)} aria-label={`Edit tool ${t.name}`}>
                      <Pencil aria-hidden className="size-3.5" /> Edit
                    </Button>
                    <Button size="sm" variant="ghost" onClick={() => setRetiring(t)} aria-label={`Retire tool ${t.name}`}>
                      <Archive aria-hidden className="size-3.5" /> Retire
                    </Button>
                  </span>
                ),
              meta: { className: "text-right" },
            } satisfies ColumnDef<Tool>,
          ]
        : []),
    ],
    [isEngineer],
  );
  const table = useDataTable({ data: revision.tools, columns, getRowId: (t) => String(t.id) });
  return (
    <Card
      title={`Tools on revision ${revision.revision}`}
      description="A profile version names its arm revision and its tool. A tool a version names is never changed: add a new one. A retired tool stays with the versions that name it; no new version may pick it."
      actions={
        isEngineer ? (
          <Button onClick={() => setEditing("new")}>
            <Plus aria-hidden className="size-4" /> Add tool
          </Button>
        ) : null
      }
    >
      <DataTable table={table} caption={`Tools on revision ${revision.revision}`} emptyMessage="No tool on this revision: the model's own tool transform is used." testId="tools-table" />
      <ToolDialog armId={armId} revision={revision} tool={editing} onClose={() => setEditing(null)} />
      <RetireToolDialog armId={armId} tool={retiring} onClose={() => setRetiring(null)} />
    </Card>
  );
}

function ToolDialog({ armId, revision, tool, onClose }: { armId: number; revision: ArmRevision; tool: Tool | "new" | null; onClose: () => void }) {
  const isNew = tool === "new";
  return (
    <Dialog
      open={tool !== null}
      onClose={onClose}
      title={isNew ? `New tool on revision ${revision.revision}` : `Edit tool ${tool?.name ?? ""}`}
      description="The TCP offset from the flange: a position in mm and roll-pitch-yaw in deg (R = Rz(yaw)·Ry(pitch)·Rx(roll))."
      className="w-[min(40rem,calc(100vw-2rem))]"
    >
      {tool !== null ? <ToolForm key={isNew ? "new" : tool.id} armId={armId} revisionId={revision.id} tool={isNew ? null : tool} onDone={onClose} /> : null}
    </Dialog>
  );
}

function ToolForm({ armId, revisionId, tool, onDone }: { armId: number; revisionId: number; tool: Tool | null; onDone: () => void }) {
  const save = useSaveTool(armId);
  const [messages, setMessages] = useState<string[]>([]);
  const { register, handleSubmit, setError, formState: { errors } } = useForm<ToolFormValues, unknown, ToolInput>({
    resolver: zodResolver(toolFormCodec),
    mode: "onTouched",
    defaultValues: toolFormValuesOf(tool),
  });
  const onSubmit = handleSubmit((input) => {
    setMessages([]);
    save.mutate(
      { revisionId, toolId: tool?.id ?? null, input },
      {
        onSuccess: onDone,
        onError: (error) => {
          if (isApiRequestError(error) && error.status === 409) {
            setMessages([error.message]);
            return;
          }
          const unplaced = applyServerIssues<ToolFormValues>(error, toolFieldOfPath, setError);
          setMessages(unplaced.length > 0 || !isApiRequestError(error) || error.issues.length === 0 ? [describeError(error), ...unplaced] : []);
        },
      },
    );
  });
  const number = (key: keyof ToolFormValues, label: string, unit: string) => (
    <NumberField key={key} label={label} unit={unit} error={errors[key]?.message} {...register(key, { valueAsNumber: true })} />
  );
  /** Three numbers in one unit under a legend: the TCP's x, y, z or its roll, pitch, yaw. */
  const triple = (legend: string, unit: string, fields: [keyof ToolFormValues, string][]) => (
    <fieldset className="grid grid-cols-3 gap-3">
      <legend className="mb-1 text-sm font-semibold">{legend}</legend>
      {fields.map(([key, label]) => number(key, label, unit))}
    </fieldset>
  );
  return (
    <form onSubmit={onSubmit} noValidate className="flex flex-col gap-4" aria-label="Tool">
      <TextField label="Name" autoComplete="off" error={errors.name?.message} {...register("name")} />
      {triple("TCP position", "mm", [["xMm", "x"], ["yMm", "y"], ["zMm", "z"]])}
      {triple("TCP orientation", "deg", [["rollDeg", "Roll"], ["pitchDeg", "Pitch"], ["yawDeg", "Yaw"]])}
      <div className="grid grid-cols-3 gap-3">{number("massKg", "Mass", "kg")}</div>
      <TextAreaField label="Note" error={errors.note?.message} {...register("note")} />
      {messages.length > 0 ? (
        <Message tone="stop" title="Not saved">
          <ul>{messages.map((m) => <li key={m}>{m}</li>)}</ul>
        </Message>
      ) : null}
      <DialogFormActions onCancel={onDone} isPending={save.isPending} submitLabel={tool ? "Save tool" : "Add tool"} pendingLabel="Saving…" />
    </form>
  );
}

function RetireToolDialog({ armId, tool, onClose: close }: { armId: number; tool: Tool | null; onClose: () => void }) {
  const retire = useRetireTool(armId);
  // The next tool's dialog starts without this one's refusal.
  const onClose = () => {
    retire.reset();
    close();
  };
  return (
    <Dialog open={tool !== null} onClose={onClose} title={`Retire tool ${tool?.name ?? ""}?`} description="No new version may pick it; versions that name it keep it. Retiring cannot be undone.">
      <form
        onSubmit={(e) => {
          e.preventDefault();
          if (tool) retire.mutate(tool.id, { onSuccess: onClose });
        }}
        className="flex flex-col gap-3"
      >
        <FailureMessage error={retire.error} title="Not retired" />
        <DialogFormActions onCancel={onClose} isPending={retire.isPending} submitLabel="Retire tool" pendingLabel="Retiring…" submitVariant="danger" />
      </form>
    </Dialog>
  );
}
