import { useState } from "react";
import { useForm } from "react-hook-form";
import { zodResolver } from "@hookform/resolvers/zod";
import { z } from "zod";
import { approveVersionSchema, rejectVersionSchema, retireVersionSchema, type ProfileVersion } from "@jogwright/shared";
import { CAUTION_TEXT } from "../../../components/layout/cautions-banner.tsx";
import { closeThen, Dialog, DialogFormActions } from "../../../components/ui/dialog.tsx";
import { Checkbox } from "../../../components/ui/checkbox.tsx";
import { Message } from "../../../components/ui/message.tsx";
import { TextAreaField } from "../../../components/ui/text-area-field.tsx";
import { applyServerIssues } from "../../../lib/server-issues.ts";
import type { Decision } from "../api/reviews-api.ts";
import { useDecideVersion } from "../hooks/use-reviews.ts";

const TEXT: Record<Decision, { title: string; field: string; button: string; busy: string }> = {
  approve: { title: "Approve", field: "Approval comment", button: "Approve and lock", busy: "Approving…" },
  reject: { title: "Reject", field: "Reason for rejecting", button: "Reject", busy: "Rejecting…" },
  retire: { title: "Retire", field: "Reason for retiring", button: "Retire", busy: "Retiring…" },
};

/** The one field: the approval's comment or the reason, checked with the shared schema's rule for it. */
const TEXT_SCHEMAS: Record<Decision, z.ZodObject<{ text: z.ZodType<string, string> }>> = {
  approve: z.object({ text: approveVersionSchema.shape.comment }),
  reject: z.object({ text: rejectVersionSchema.shape.reason }),
  retire: z.object({ text: retireVersionSchema.shape.reason }),
};

/** The server names the field `comment` (approve) or `reason` (reject, retire). */
const fieldOfServerIssue = (path: string) => (path === "comment" || path === "reason" ? ("text" as const) : undefined);

/**
 * Approve, reject or retire one version; every decision needs a written comment or reason. Approving a
 * version older than the approved one (`approvedVersion`) is a rollback: the dialog says so and asks for
 * an explicit "Roll back to vN" confirmation, which the server requires too (`rollback: true`).
 */
export function DecisionDialog({ decision, version, label, approvedVersion, onClose, onDone }: {
  decision: Decision | null;
  version: ProfileVersion;
  label: string;
  approvedVersion?: ProfileVersion | null;
  onClose: () => void;
  onDone: (decision: Decision, version: ProfileVersion) => void;
}) {
  const rollbackFrom = decision === "approve" && approvedVersion && approvedVersion.number > version.number ? approvedVersion : null;
  const title = rollbackFrom ? `Roll back to v${version.number}: ${label}` : decision ? `${TEXT[decision].title} ${label}` : "";
  return (
    <Dialog open={decision !== null} onClose={onClose} title={title}>
      {decision ? <DecisionForm key={decision} decision={decision} version={version} rollbackFrom={rollbackFrom} onCancel={onClose} onDone={closeThen(onClose, onDone)} /> : null}
    </Dialog>
  );
}

function DecisionForm({ decision, version, rollbackFrom, onCancel, onDone }: {
  decision: Decision;
  version: ProfileVersion;
  rollbackFrom: ProfileVersion | null;
  onCancel: () => void;
  onDone: (decision: Decision, version: ProfileVersion) => void;
}) {
  const decide = useDecideVersion(version.id);
  const [isRollbackConfirmed, setRollbackConfirmed] = useState(false);
  const [isRollbackAsked, setRollbackAsked] = useState(false);
  const [unplacedIssues, setUnplacedIssues] = useState<string[]>([]);
  const { register, handleSubmit, setError, formState } = useForm({
    resolver: zodResolver(TEXT_SCHEMAS[decision]),
    mode: "onTouched",
    defaultValues: { text: "" },
  });
  const t = TEXT[decision];

  // The resolver has trimmed and checked the text.
  const onSubmit = handleSubmit(({ text }) => {
    setUnplacedIssues([]);
    if (rollbackFrom && !isRollbackConfirmed) {
      setRollbackAsked(true);
      return;
    }
    const input =
      decision === "approve"
        ? { decision, comment: text, paramsSha256: version.paramsSha256, ...(rollbackFrom ? { rollback: true } : {}) }
        : { decision, reason: text };
    decide.mutate(input, {
      onSuccess: (v) => onDone(decision, v),
      onError: (error) => setUnplacedIssues(applyServerIssues(error, fieldOfServerIssue, setError)),
    });
  });

  return (
    <form onSubmit={onSubmit} noValidate className="flex flex-col gap-4">
      {decision === "approve" ? (
        <>
          <Message tone="warn" title="An approval here is not a safety sign-off">
            It locks this version for its operator in the simulation. {CAUTION_TEXT}
          </Message>
          <p className="text-sm text-ink-300">
            You approve exactly the parameters shown, identified by their SHA-256{" "}
            <span className="num break-all text-ink-100">{version.paramsSha256}</span>. If they differ on the server, it refuses.
          </p>
        </>
      ) : null}
      {rollbackFrom ? (
        <Message tone="warn" title={`This rolls the operator back from v${rollbackFrom.number} to v${version.number}`}>
          <p>
            v{rollbackFrom.number} is the approved version now and is newer. Approving v{version.number} supersedes it, and the operator drives v{version.number}{" "}
            from then on. The audit trail records it as a rollback.
          </p>
          <div className="mt-2">
            <Checkbox label={`Roll back to v${version.number}`} checked={isRollbackConfirmed} onChange={(e) => setRollbackConfirmed(e.target.checked)} />
            {isRollbackAsked && !isRollbackConfirmed ? (
              <p role="alert" className="mt-1 text-sm text-stop-400">
                Tick “Roll back to v{version.number}” to confirm the rollback.
              </p>
            ) : null}
          </div>
        </Message>
      ) : null}
      {decision === "retire" ? <p className="text-sm text-ink-300">A retired version can no longer be driven.</p> : null}
      <TextAreaField
        label={t.field}
        hint={decision === "approve" ? "Required. Recorded with your name, the time and the hash." : "Required. The author sees it."}
        error={formState.errors.text?.message}
        {...register("text")}
      />
      {decide.isError ? (
        <Message tone="stop" title="Not done">
          {decide.error.message}
          {unplacedIssues.length > 0 ? <p>{unplacedIssues.join(" · ")}</p> : null}
        </Message>
      ) : null}
      <DialogFormActions
        onCancel={onCancel}
        isPending={decide.isPending}
        submitLabel={rollbackFrom ? `Roll back to v${version.number}` : t.button}
        pendingLabel={t.busy}
        submitVariant={decision === "approve" ? "primary" : "danger"}
      />
    </form>
  );
}
