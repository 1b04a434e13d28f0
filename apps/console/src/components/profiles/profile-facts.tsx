import type { ReactNode } from "react";

/** "Label value" in a page header's line of facts, the value in strong text. */
export function Fact({ label, children }: { label: string; children: ReactNode }) {
  return (
    <span>
      {label} <strong className="text-ink-100">{children}</strong>
    </span>
  );
}

/** Who a profile is for and which arm it drives: the first facts of every profile or review header. */
export function ProfileFacts({ profile }: { profile: { operatorName: string; armName: string } }) {
  return (
    <>
      <Fact label="Operator">{profile.operatorName}</Fact>
      <Fact label="Arm">{profile.armName}</Fact>
    </>
  );
}
