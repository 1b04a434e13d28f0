import { Message } from "../../../components/ui/message.tsx";

/** The messages a user form could not put on a field (e.g. from applyServerIssues), as one list; nothing when there are none. */
export function FormMessageList({ messages, tone, title }: { messages: string[]; tone: "info" | "stop"; title?: string | undefined }) {
  if (messages.length === 0) return null;
  return (
    <Message tone={tone} title={title}>
      <ul>{messages.map((m) => <li key={m}>{m}</li>)}</ul>
    </Message>
  );
}
