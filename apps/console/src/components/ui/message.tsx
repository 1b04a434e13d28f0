import type { ReactNode } from "react";
import { CircleCheck, CircleExclamationPoint, Info, TriangleExclamationPoint } from "lucide-react";
import { describeError } from "../../lib/api-client.ts";
import { cn } from "../../lib/cn.ts";

type Tone = "info" | "ok" | "warn" | "stop";

const tones: Record<Tone, { box: string; icon: typeof Info }> = {
  info: { box: "border-ink-600 bg-ink-850 text-ink-100", icon: Info },
  ok: { box: "border-ok-400/60 bg-ok-950 text-ink-100", icon: CircleCheck },
  warn: { box: "border-warn-400/60 bg-warn-950 text-ink-100", icon: TriangleExclamationPoint },
  stop: { box: "border-stop-400/60 bg-stop-950 text-ink-100", icon: CircleExclamationPoint },
};
const iconColour: Record<Tone, string> = {
  info: "text-iris-400",
  ok: "text-ok-400",
  warn: "text-warn-400",
  stop: "text-stop-400",
};

/** An inline message. Tone "stop" is announced at once (role alert); the others politely (role status). */
export function Message({ tone = "info", title, children, className }: {
  tone?: Tone;
  title?: string;
  children?: ReactNode;
  className?: string;
}) {
  const { box, icon: Icon } = tones[tone];
  return (
    <div role={tone === "stop" ? "alert" : "status"} className={cn("flex gap-3 rounded-md border p-3 text-sm", box, className)}>
      <Icon aria-hidden className={cn("mt-0.5 size-4 shrink-0", iconColour[tone])} />
      <div className="flex flex-col gap-1">
        {title ? <p className="font-semibold">{title}</p> : null}
        {children ? <div>{children}</div> : null}
      </div>
    </div>
  );
}

/** A failed request's refusal in words (describeError) under `title`; nothing while there is no error. */
export function FailureMessage({ error, title, className }: { error: unknown; title: string; className?: string }) {
  if (!error) return null;
  return (
    <Message tone="stop" title={title} className={className}>
      {describeError(error)}
    </Message>
  );
}
