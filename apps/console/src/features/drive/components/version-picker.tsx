import { useId } from "react";
import { useQuery } from "@tanstack/react-query";
import type { ProfileSummary, ProfileVersion } from "@jogwright/shared";
import { Button } from "../../../components/ui/button.tsx";
import { Message } from "../../../components/ui/message.tsx";
import { describeError } from "../../../lib/api-client.ts";
import { profileDetailQueryOptions } from "../api/drive-api.ts";

/**
 * Profile, then version. Operators see only their profiles with an approved, driveable version and only
 * that version; engineers may pick any version that is not retired, drafts marked plainly.
 */

export interface PickedVersion {
  profileId: number | null;
  versionId: number | null;
}

const selectClass = "h-9 min-w-64 rounded-md border border-ink-600 bg-ink-800 px-3 text-sm text-ink-100 hover:border-ink-400 disabled:text-ink-400";

export function versionLabel(v: Pick<ProfileVersion, "number" | "state">): string {
  return v.state === "approved" ? `Version ${v.number} · approved` : `Version ${v.number} · ${v.state} — UNAPPROVED, engineer test drive`;
}

export function VersionPicker({ profiles, isEngineer, picked, onPick, onStart, isDriving, canStart }: {
  profiles: readonly ProfileSummary[];
  isEngineer: boolean;
  picked: PickedVersion;
  onPick: (picked: PickedVersion) => void;
  onStart: () => void;
  isDriving: boolean;
  canStart: boolean;
}) {
  const id = useId();
  const choices = isEngineer ? profiles : profiles.filter((p) => p.driveableVersionId !== null);
  const detail = useQuery({ ...profileDetailQueryOptions(picked.profileId ?? 0), enabled: picked.profileId !== null });
  const profile = choices.find((p) => p.id === picked.profileId) ?? null;

  let versions: { id: number; label: string }[] = [];
  if (profile) {
    if (!isEngineer) {
      const id = profile.driveableVersionId;
      const known = detail.data?.versions.find((v) => v.id === id) ?? (profile.latestVersion.id === id ? profile.latestVersion : null);
      versions = id === null ? [] : [{ id, label: known ? versionLabel(known) : "Approved version" }];
    } else if (detail.data) {
      versions = detail.data.versions
        .filter((v) => v.state !== "retired")
        .sort((a, b) => b.number - a.number)
        .map((v) => ({ id: v.id, label: versionLabel(v) + (v.exceedsCeilings ? " (exceeds site ceilings)" : "") }));
    } else {
      versions = [{ id: profile.latestVersion.id, label: versionLabel(profile.latestVersion) }];
    }
  }

  if (choices.length === 0) {
    return (
      <Message tone="warn" title="Nothing to drive">
        {isEngineer
          ? "There is no rate profile yet. Create one on the Profiles page."
          : "No approved profile version is assigned to you. Ask an engineer for one and a safety officer to approve it."}
      </Message>
    );
  }

  return (
    <div className="flex flex-wrap items-end gap-3">
      <div className="flex flex-col gap-1 text-sm font-semibold text-ink-100">
        <label htmlFor={`${id}-profile`}>Profile</label>
        <select
          id={`${id}-profile`}
          className={selectClass}
          value={picked.profileId ?? ""}
          onChange={(event) => {
            const id = event.target.value === "" ? null : Number(event.target.value);
            const next = choices.find((p) => p.id === id);
            onPick({ profileId: id, versionId: next && !isEngineer ? next.driveableVersionId : (next?.driveableVersionId ?? next?.latestVersion.id ?? null) });
          }}
        >
          <option value="">Pick a profile…</option>
          {choices.map((p) => (
            <option key={p.id} value={p.id}>
              {p.name} — {p.armName}
              {isEngineer ? ` (for ${p.operatorName})` : ""}
            </option>
          ))}
        </select>
      </div>
      <div className="flex flex-col gap-1 text-sm font-semibold text-ink-100">
        <label htmlFor={`${id}-version`}>Version</label>
        <select
          id={`${id}-version`}
          className={selectClass}
          value={picked.versionId ?? ""}
          disabled={!profile}
          onChange={(event) => onPick({ ...picked, versionId: event.target.value === "" ? null : Number(event.target.value) })}
        >
          {versions.length === 0 ? <option value="">—</option> : null}
          {versions.map((v) => (
            <option key={v.id} value={v.id}>
              {v.label}
            </option>
          ))}
        </select>
      </div>
      <Button variant="primary" onClick={onStart} disabled={!canStart || picked.versionId === null}>
        {isDriving ? "Switch to this version" : "Start driving"}
      </Button>
      {detail.isError && isEngineer ? <p className="text-xs text-stop-400">{describeError(detail.error)}</p> : null}
    </div>
  );
}
