import { Fragment, useState } from "react";
import { ChevronDown, ChevronRight, RotateCw } from "lucide-react";
import { label, type MailMessage } from "@jogwright/shared";
import { PageHeader } from "../../../components/layout/page-header.tsx";
import { Badge } from "../../../components/ui/badge.tsx";
import { Button } from "../../../components/ui/button.tsx";
import { EmptyTableRow, TableFrame, TableHead } from "../../../components/ui/table-frame.tsx";
import { Message } from "../../../components/ui/message.tsx";
import { formatDateTime } from "../../../lib/format.ts";
import { useOutbox, useRetryMail } from "../hooks/use-outbox.ts";
import { QueryStatus } from "../../../components/ui/query-status.tsx";

const STATUS_TONE = { pending: "warn", sent: "ok", failed: "stop" } as const;

export function OutboxPage() {
  const outbox = useOutbox();
  const retry = useRetryMail();
  const [openId, setOpenId] = useState<number | null>(null);
  return (
    <>
      <PageHeader title="Outbox" description="Every e-mail Jogwright sends (review requests, decisions), newest first, with its delivery state." />
      {retry.isError ? (
        <Message tone="stop" title="Retry failed" className="mb-4">
          {retry.error.message}
        </Message>
      ) : null}
      <QueryStatus query={outbox} loading="Loading the outbox…" failed="Could not load the outbox" />
      {outbox.data ? (
        <TableFrame testId="outbox-table" caption="Outgoing mail">
          <TableHead
            headings={[<span className="sr-only">Show the text</span>, "Created", "To", "Subject", "About", "Status", "Attempts", "Last error", "Sent"]}
            hasActions
          />
          <tbody>
            {[...outbox.data]
              .sort((a, b) => b.createdAt.localeCompare(a.createdAt))
              .map((m) => (
                <Fragment key={m.id}>
                  <MailRow message={m} isOpen={openId === m.id} onToggle={() => setOpenId(openId === m.id ? null : m.id)} onRetry={() => retry.mutate(m.id)} isRetrying={retry.isPending && retry.variables === m.id} />
                  {openId === m.id ? (
                    <tr className="border-b border-ink-700 bg-ink-900">
                      <td />
                      <td colSpan={9} className="px-3 py-3">
                        <pre className="font-mono text-xs whitespace-pre-wrap text-ink-300">{m.text}</pre>
                      </td>
                    </tr>
                  ) : null}
                </Fragment>
              ))}
            {outbox.data.length === 0 ? <EmptyTableRow colSpan={10}>No mail has been sent yet.</EmptyTableRow> : null}
          </tbody>
        </TableFrame>
      ) : null}
    </>
  );
}

function MailRow({ message: m, isOpen, onToggle, onRetry, isRetrying }: { message: MailMessage; isOpen: boolean; onToggle: () => void; onRetry: () => void; isRetrying: boolean }) {
  return (
    <tr className="border-b border-ink-700 align-top last:border-b-0 hover:bg-ink-850">
      <td className="px-2 py-2">
        <button type="button" onClick={onToggle} aria-expanded={isOpen} aria-label={`${isOpen ? "Hide" : "Show"} the text of “${m.subject}”`} className="rounded-sm p-0.5 text-ink-300 hover:text-ink-100">
          {isOpen ? <ChevronDown aria-hidden className="size-4" /> : <ChevronRight aria-hidden className="size-4" />}
        </button>
      </td>
      <td className="num px-3 py-2 whitespace-nowrap text-ink-300">{formatDateTime(m.createdAt)}</td>
      <td className="num px-3 py-2 text-xs" title={m.to.join(", ")}>
        {m.to.slice(0, 2).join(", ")}
        {m.to.length > 2 ? <span className="text-ink-400"> +{m.to.length - 2} more</span> : null}
      </td>
      <td className="px-3 py-2">{m.subject}</td>
      <td className="px-3 py-2 text-ink-300">{label("mailKind", m.kind)}</td>
      <td className="px-3 py-2">
        <Badge tone={STATUS_TONE[m.status]}>{label("mailStatus", m.status)}</Badge>
      </td>
      <td className="num px-3 py-2 text-right">{m.attempts}</td>
      <td className="max-w-64 px-3 py-2 text-xs text-ink-300">{m.lastError ?? <span className="text-ink-400">—</span>}</td>
      <td className="num px-3 py-2 whitespace-nowrap text-ink-300">{m.sentAt ? formatDateTime(m.sentAt) : "—"}</td>
      <td className="px-3 py-2 text-right">
        {m.status !== "sent" ? (
          <Button size="sm" onClick={onRetry} disabled={isRetrying} aria-label={`Retry “${m.subject}”`}>
            <RotateCw aria-hidden className="size-3.5" /> {isRetrying ? "Retrying…" : "Retry"}
          </Button>
        ) : null}
      </td>
    </tr>
  );
}
