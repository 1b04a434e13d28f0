import { VERSION_STATE_LABELS, type ProfileVersion, type VersionState } from "@jogwright/shared";
import { Badge } from "../ui/badge.tsx";

const STATE_TONES = { draft: "neutral", submitted: "accent", approved: "ok", rejected: "stop", superseded: "neutral", retired: "neutral", withdrawn: "neutral" } as const;

export function VersionStateBadge({ state }: { state: VersionState }) {
  return <Badge tone={STATE_TONES[state]}>{VERSION_STATE_LABELS[state]}</Badge>;
}

/** "Above ceilings" for an approved version flagged after the site ceilings were lowered. */
export function FlaggedBadge({ version }: { version: Pick<ProfileVersion, "exceedsCeilings"> }) {
  return version.exceedsCeilings ? (
    <span title="The site ceilings were lowered below this version; it cannot be driven until a compliant version is approved.">
      <Badge tone="warn">Above ceilings</Badge>
    </span>
  ) : null;
}

/** "v3" with the state badge beside it. */
export function VersionLabel({ version }: { version: Pick<ProfileVersion, "number" | "state" | "exceedsCeilings"> }) {
  return (
    <span className="inline-flex items-center gap-2 whitespace-nowrap">
      <span className="num font-semibold text-ink-100">v{version.number}</span>
      <VersionStateBadge state={version.state} />
      <FlaggedBadge version={version} />
    </span>
  );
}

export const shortHash = (sha256: string) => sha256.slice(0, 10);
