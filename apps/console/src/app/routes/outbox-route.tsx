import { OutboxPage } from "../../features/outbox/components/outbox-page.tsx";

export default function OutboxRoute() {
  return (
    <>
      <title>Outbox · Jogwright</title>
      <OutboxPage />
    </>
  );
}
