import { useId, useState } from "react";
import { Link, useNavigate } from "react-router";
import { useForm } from "react-hook-form";
import type { ColumnDef } from "@tanstack/react-table";
import type { z } from "zod";
import { zodResolver } from "@hookform/resolvers/zod";
import { ArrowLeft, Save } from "lucide-react";
import { armUploadFieldsSchema, mToMm, type ArmUploadPreview, type User } from "@jogwright/shared";
import { PageHeader } from "../../../components/layout/page-header.tsx";
import { Badge } from "../../../components/ui/badge.tsx";
import { Button, SubmitButton } from "../../../components/ui/button.tsx";
import { Card } from "../../../components/ui/card.tsx";
import { Message } from "../../../components/ui/message.tsx";
import { DataTable, useDataTable } from "../../../components/ui/data-table.tsx";
import { TextAreaField } from "../../../components/ui/text-area-field.tsx";
import { TextField } from "../../../components/ui/text-field.tsx";
import { describeError, isApiRequestError } from "../../../lib/api-client.ts";
import { formatFixed } from "../../../lib/format.ts";
import { applyServerIssues } from "../../../lib/server-issues.ts";
import { uploadIssueOf, type UploadIssue } from "../forms/upload-issues.ts";
import { usePreviewArmFile, useSaveArmFile } from "../hooks/use-arm-mutations.ts";
import { ArmPreview } from "./arm-preview.tsx";
import type { ArmSavedState } from "./arm-form-page.tsx";
import { DhTable } from "./dh-table.tsx";
import { BaseAndTool } from "./pose-facts.tsx";
import { DocumentTitle } from "../../../components/layout/document-title.tsx";

// `/arms/upload` (engineers): an arm JSON or a CSV DH table. The server parses and checks it (nothing is
// saved) and answers with the SI arm and σ at the zero pose, or 422 with every problem and its line and
// field; the arm shows in the 3D preview before it is saved under a name.

const saveFieldsSchema = armUploadFieldsSchema;
type SaveFields = z.input<typeof saveFieldsSchema>;
const SAVE_FIELDS = ["name", "description", "note"] as const;

export function ArmUploadPage({ user }: { user: User }) {
  const isEngineer = user.roles.includes("engineer");
  const preview = usePreviewArmFile();
  const [file, setFile] = useState<File | null>(null);
  const inputId = useId();

  const check = (chosen: File | null) => {
    setFile(chosen);
    if (chosen) preview.mutate(chosen);
    else preview.reset();
  };
  const error = preview.error;
  const issues = isApiRequestError(error) && error.status === 422 ? error.issues.map(uploadIssueOf) : [];

  return (
    <>
      <DocumentTitle page="Upload an arm" />
      <Link to="/arms" className="mb-3 inline-flex items-center gap-1 text-sm font-semibold text-iris-300 hover:underline">
        <ArrowLeft aria-hidden className="size-4" /> All arms
      </Link>
      <PageHeader
        title="Upload an arm file"
        description="The arm JSON of the product brief (SI units), or a CSV DH table whose header names each column with its unit (a_mm or a_m, alpha_deg or alpha_rad, …). It is checked and previewed first; nothing is saved until you save it."
      />
      {!isEngineer ? (
        <Message tone="info" title="Read only">
          Engineers upload arms. <Link className="text-iris-300 underline" to="/arms">See the arms</Link>.
        </Message>
      ) : (
        <div className="flex flex-col gap-6">
          <Card title="File">
            <div className="flex flex-wrap items-end gap-4">
              <div className="flex flex-col gap-1.5">
                <label htmlFor={inputId} className="text-sm font-semibold">
                  Arm file (JSON or CSV, at most 1 MB)
                </label>
                <input
                  id={inputId}
                  type="file"
                  accept=".json,.csv,.txt,application/json,text/csv"
                  data-testid="arm-file"
                  onChange={(e) => check(e.target.files?.[0] ?? null)}
                  className="text-sm file:mr-3 file:h-9 file:rounded-md file:border file:border-ink-600 file:bg-ink-800 file:px-4 file:font-semibold file:text-ink-100 hover:file:border-ink-400"
                />
              </div>
              {file ? (
                <Button onClick={() => check(file)} disabled={preview.isPending}>
                  {preview.isPending ? "Checking…" : "Check again"}
                </Button>
              ) : null}
            </div>
            <details className="mt-4 text-sm text-ink-300">
              <summary className="cursor-pointer font-semibold text-ink-100">The CSV format</summary>
              <p className="mt-2">
                Lines before the header: <code className="num">{"# convention: standard"}</code> (or modified; required), optionally{" "}
                <code className="num">{"# tool_mm:"}</code> / <code className="num">{"# base_mm:"}</code> with 16 numbers (a row-major 4×4 transform; <code>_m</code> for metres).
                Then a header row and one row per joint: <code className="num">type</code> (revolute or prismatic), <code className="num">a_mm</code>,{" "}
                <code className="num">alpha_deg</code>, <code className="num">d_mm</code>, <code className="num">theta_deg</code>, and optionally{" "}
                <code className="num">min_deg</code>, <code className="num">max_deg</code> (<code>_mm</code> for a prismatic joint), <code className="num">speed_deg_s</code>,{" "}
                <code className="num">accel_deg_s2</code>. Metres and radians work too.
              </p>
            </details>
          </Card>
          {preview.isPending ? <Message>Checking the file…</Message> : null}
          {issues.length > 0 ? <UploadIssues message={error?.message ?? ""} issues={issues} /> : null}
          {error && issues.length === 0 ? (
            <Message tone="stop" title="Could not check the file">
              {describeError(error)}
            </Message>
          ) : null}
          {preview.data && file ? <PreviewAndSave key={`${file.name}-${file.lastModified}-${preview.submittedAt}`} file={file} preview={preview.data} /> : null}
        </div>
      )}
    </>
  );
}

const ISSUE_COLUMNS: ColumnDef<UploadIssue>[] = [
  { id: "line", header: "Line", cell: ({ row }) => row.original.line ?? "—", meta: { className: "num text-right", headClassName: "text-right" } },
  { id: "field", header: "Field", cell: ({ row }) => row.original.field, meta: { className: "num" } },
  { id: "problem", header: "Problem", cell: ({ row }) => row.original.message, meta: { className: "text-stop-400" } },
];

function UploadIssues({ message, issues }: { message: string; issues: UploadIssue[] }) {
  const table = useDataTable({ data: issues, columns: ISSUE_COLUMNS });
  return (
    <Card title="The file was refused" description={`${message} Fix each problem and choose the file again.`}>
      <DataTable table={table} caption="Problems in the arm file, with their line and field" emptyMessage="No problem." testId="upload-issues" />
    </Card>
  );
}

function PreviewAndSave({ file, preview }: { file: File; preview: ArmUploadPreview }) {
  const navigate = useNavigate();
  const save = useSaveArmFile();
  const [messages, setMessages] = useState<string[]>([]);
  const zeros = preview.model.joints.map(() => 0);
  const { register, handleSubmit, setError, formState: { errors } } = useForm<SaveFields, unknown, z.output<typeof saveFieldsSchema>>({
    resolver: zodResolver(saveFieldsSchema),
    mode: "onTouched",
    defaultValues: { name: file.name.replace(/\.(json|csv|txt)$/i, ""), description: "", note: "" },
  });
  const onSubmit = handleSubmit((fields) => {
    setMessages([]);
    save.mutate(
      { file, fields },
      {
        onSuccess: (saved) => navigate(`/arms/${saved.arm.id}`, { state: { saved: `Saved ${saved.arm.name} from ${file.name}, revision 1.` } satisfies ArmSavedState }),
        onError: (e) => {
          const unplaced = applyServerIssues<SaveFields>(e, SAVE_FIELDS, setError);
          setMessages(unplaced.length > 0 || !isApiRequestError(e) || e.issues.length === 0 ? [describeError(e), ...unplaced] : []);
        },
      },
    );
  });
  return (
    <>
      <Card
        title="Preview"
        description="As the server read the file, before anything is saved."
        actions={
          <>
            <Badge tone="accent">{preview.format.toUpperCase()}</Badge>
            <Badge>{preview.model.joints.length} joints</Badge>
          </>
        }
      >
        <div className="flex flex-col gap-4">
          <p className="text-sm" data-testid="upload-sigma-zero" data-value={preview.sigmaMinAtZero}>
            At the zero pose: σ_min <span className="num font-semibold">{formatFixed(mToMm(preview.sigmaMinAtZero), 1)}</span> <span className="text-xs text-ink-400">mm</span>
            {preview.sigmaMinAtZero < 1e-6 ? <span className="text-warn-400"> — singular at q = 0</span> : null}
          </p>
          <ArmPreview model={preview.model} startPose={zeros} title="The uploaded arm" />
          <DhTable model={preview.model} readyPose={zeros} caption={`DH parameters read from ${file.name}`} />
          <BaseAndTool model={preview.model} />
        </div>
      </Card>
      <Card title="Save as a new arm" description="Revision 1 of a new arm; the model's tool becomes its first tool, “Flange tool”.">
        <form onSubmit={onSubmit} noValidate className="flex flex-col gap-4" aria-label="Save the uploaded arm">
          <div className="grid gap-4 md:grid-cols-2">
            <TextField label="Name" autoComplete="off" error={errors.name?.message} {...register("name")} />
            <TextField label="Revision note" hint="Optional; “Uploaded (csv).” when empty." error={errors.note?.message} {...register("note")} />
            <TextAreaField label="Description" className="md:col-span-2" rows={2} error={errors.description?.message} {...register("description")} />
          </div>
          {messages.length > 0 ? (
            <Message tone="stop" title="Not saved">
              <ul>{messages.map((m) => <li key={m}>{m}</li>)}</ul>
            </Message>
          ) : null}
          <div className="flex justify-end">
            <SubmitButton icon={Save} isPending={save.isPending} pendingLabel="Saving…">
              Save arm
            </SubmitButton>
          </div>
        </form>
      </Card>
    </>
  );
}
