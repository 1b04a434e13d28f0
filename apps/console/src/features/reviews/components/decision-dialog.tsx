import { useState } from "react";
import { approveVersionSchema, rejectVersionSchema, retireVersionSchema, type ProfileVersion } from "@jogwright/shared";
import { CAUTION_TEXT } from "../../../components/layout/cautions-banner.tsx";
import { Dialog, DialogFormActions } from "../../../components/ui/dialog.tsx";
import { Message } from "../../../components/ui/message.tsx";
import { TextAreaField } from "../../../components/ui/text-area-field.tsx";
import type { Decision } from "../api/reviews-api.ts";
import { useDecideVersion } from "../hooks/use-reviews.ts";

const TEXT: Record<Decision, { title: string; field: string; button: string; busy: string }> = {
  approve: { title: "Approve", field: "Approval comment", button: "Approve and lock", busy: "Approving…" },
  reject: { title: "Reject", field: "Reason for rejecting", button: "Reject", busy: "Rejecting…" },
  retire: { title: "Retire", field: "Reason for retiring", button: "Retire", busy: "Retiring…" },
};

/** Approve, reject or retire one version; every decision needs a written comment or reason. */
export function DecisionDialog({ decision, version, label, onClose, onDone }: {
  decision: Decision | null;
  version: ProfileVersion;
  label: string;
  onClose: () => void;
  onDone: (decision: Decision, version: ProfileVersion) => void;
}) {
  return (
    <Dialog open={decision !== null} onClose={onClose} title={decision ? `${TEXT[decision].title} ${label}` : ""}>
      {decision ? <DecisionForm key={decision} decision={decision} version={version} onCancel={onClose} onDone={onDone} /> : null}
    </Dialog>
  );
}

function DecisionForm({ decision, version, onCancel, onDone }: {
  decision: Decision;
  version: ProfileVersion;
  onCancel: () => void;
  onDone: (decision: Decision, version: ProfileVersion) => void;
}) {
  const decide = useDecideVersion(version.id);
  const [text, setText] = useState("");
  const [isTouched, setTouched] = useState(false);
  const parsed =
    decision === "approve"
      ? approveVersionSchema.safeParse({ comment: text, paramsSha256: version.paramsSha256 })
      : (decision === "reject" ? rejectVersionSchema : retireVersionSchema).safeParse({ reason: text });
  const error = !parsed.success && isTouched ? parsed.error.issues[0]?.message : undefined;
  const t = TEXT[decision];

  const onSubmit = (event: React.FormEvent) => {
    event.preventDefault();
    setTouched(true);
    if (!parsed.success) return;
    const input =
      decision === "approve"
        ? { decision, comment: text.trim(), paramsSha256: version.paramsSha256 }
        : { decision, reason: text.trim() };
    decide.mutate(input, { onSuccess: (v) => onDone(decision, v) });
  };

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
      {decision === "retire" ? <p className="text-sm text-ink-300">A retired version can no longer be driven.</p> : null}
      <TextAreaField
        label={t.field}
        hint={decision === "approve" ? "Required. Recorded with your name, the time and the hash." : "Required. The author sees it."}
        value={text}
        onChange={(e) => setText(e.target.value)}
        onBlur={() => setTouched(true)}
        error={error}
      />
      {decide.isError ? (
        <Message tone="stop" title="Not done">
          {decide.error.message}
        </Message>
      ) : null}
      <DialogFormActions
        onCancel={onCancel}
        isPending={decide.isPending}
        submitLabel={t.button}
        pendingLabel={t.busy}
        submitVariant={decision === "approve" ? "primary" : "danger"}
      />
    </form>
  );
}
