import { counter, enumOf, json, NULLABLE, serialId, string, text, time } from "../columns.ts";
import { schemaStep, timeNow } from "./columns.ts";

/**
 * Outgoing mail. Rows are written in the same transaction as the workflow step they announce, then
 * delivered after commit; a failed delivery keeps the row (status failed, last_error) for the retry
 * timer (next_attempt_at, backoff) and the admin's retry button. claimed_until stops two senders from
 * delivering the same row at once.
 */
export const up = schemaStep(async (qi) => {
  await qi.createTable("mail_outbox", {
    id: serialId(),
    created_at: timeNow(),
    kind: string(40),
    recipients: json(),
    subject: string(250),
    body: text(),
    status: enumOf(["pending", "sent", "failed"], "pending"),
    attempts: counter(),
    last_error: text(NULLABLE),
    sent_at: time(NULLABLE),
    next_attempt_at: timeNow(),
    claimed_until: time(NULLABLE),
  });
  await qi.addIndex("mail_outbox", ["status", "next_attempt_at"], { name: "mail_outbox_due" });
});

export const down = schemaStep((qi) => qi.dropTable("mail_outbox"));
