import { PageHeader } from "../../../components/layout/page-header.tsx";
import { Message } from "../../../components/ui/message.tsx";
import { useArms } from "../../../lib/queries/arms.ts";
import { ArmCard } from "./arm-card.tsx";
import { QueryStatus } from "../../../components/ui/query-status.tsx";

export function ArmsPage() {
  const arms = useArms();
  return (
    <>
      <PageHeader
        title="Arms"
        description="The simulated arms, as Denavit–Hartenberg tables. Lengths in mm, angles in deg, speeds in deg/s (mm and mm/s for sliding joints)."
      />
      <QueryStatus query={arms} loading="Loading arms…" failed="Could not load the arms" />
      {arms.data?.length === 0 ? <Message>No arm is defined yet.</Message> : null}
      <div className="flex flex-col gap-6">
        {arms.data?.map((arm) => <ArmCard key={arm.id} arm={arm} />)}
      </div>
    </>
  );
}
