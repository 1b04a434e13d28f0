import { useId } from "react";
import { useQuery } from "@tanstack/react-query";
import { label, type DriveableVersion } from "@jogwright/shared";
import { Button } from "../../../components/ui/button.tsx";
import { Loading } from "../../../components/ui/loading.tsx";
import { Message } from "../../../components/ui/message.tsx";
import { describeError } from "../../../lib/api-client.ts";
import { driveableVersionsQueryOptions } from "../api/drive-api.ts";

/**
 * Profile, then version, from GET /api/drive/versions: the server's one driving rule (isDriveable in
 * packages/shared) decides what is listed, so the picker never offers what the socket would refuse.
 * Operators see the approved version of each profile assigned to them; engineers every version that is not
 * retired, anything but the approved, unflagged one marked plainly as a test drive.
 */

export interface PickedVersion {
  profileId: number | null;
  versionId: number | null;
}

const selectClass = "h-9 min-w-64 rounded-md border border-ink-600 bg-ink-800 px-3 text-sm text-ink-100 hover:border-ink-400 disabled:text-ink-400";

export function versionLabel(v: Pick<DriveableVersion, "number" | "state" | "kind" | "exceedsCeilings">): string {
  if (v.kind === "approved") return `Version ${v.number} · approved`;
  const stateWords = label("versionState", v.state).toLowerCase();
  const state = v.exceedsCeilings ? `${stateWords}, above the site ceilings` : stateWords;
  return `Version ${v.number} · ${state} — UNAPPROVED, engineer test drive`;
}

interface ProfileChoice {
  profileId: number;
  label: string;
  versions: DriveableVersion[];
}

/** The listed versions grouped by profile, in the server's order (profile name, newest version first). */
function groupByProfile(versions: readonly DriveableVersion[], isEngineer: boolean): ProfileChoice[] {
  const byProfile = new Map<number, ProfileChoice>();
  for (const v of versions) {
    let choice = byProfile.get(v.profileId);
    if (!choice) {
      choice = { profileId: v.profileId, label: `${v.profileName} — ${v.armName}${isEngineer ? ` (for ${v.operatorName})` : ""}`, versions: [] };
      byProfile.set(v.profileId, choice);
    }
    choice.versions.push(v);
  }
  return [...byProfile.values()];
}

/** The version to preselect: the approved one when there is one, else the newest. */
const defaultVersionOf = (choice: ProfileChoice | undefined) => (choice?.versions.find((v) => v.kind === "approved") ?? choice?.versions[0])?.id ?? null;

export function VersionPicker({ isEngineer, picked, onPick, onStart, isDriving, drivenVersionId, canStart }: {
  isEngineer: boolean;
  picked: PickedVersion;
  onPick: (picked: PickedVersion) => void;
  onStart: () => void;
  isDriving: boolean;
  /** The version of the live session, if any: switching to it would only restart it. */
  drivenVersionId: number | null;
  canStart: boolean;
}) {
  const id = useId();
  const driveable = useQuery(driveableVersionsQueryOptions());

  if (driveable.isPending) return <Loading label="Loading what you may drive…" />;
  if (driveable.isError) {
    return (
      <Message tone="stop" title="Could not load the versions you may drive">
        {describeError(driveable.error)}
      </Message>
    );
  }
  const choices = groupByProfile(driveable.data, isEngineer);
  if (choices.length === 0) {
    return (
      <Message tone="warn" title="Nothing to drive">
        {isEngineer
          ? "There is no version to try out yet. Create a rate profile on the Profiles page."
          : "No approved profile version is assigned to you. Ask an engineer for one and a safety officer to approve it."}
      </Message>
    );
  }
  const profile = choices.find((c) => c.profileId === picked.profileId) ?? null;
  const versions = profile?.versions ?? [];

  return (
    <div className="flex flex-wrap items-end gap-3">
      <div className="flex flex-col gap-1 text-sm font-semibold text-ink-100">
        <label htmlFor={`${id}-profile`}>Profile</label>
        <select
          id={`${id}-profile`}
          className={selectClass}
          value={picked.profileId ?? ""}
          onChange={(event) => {
            const profileId = event.target.value === "" ? null : Number(event.target.value);
            onPick({ profileId, versionId: defaultVersionOf(choices.find((c) => c.profileId === profileId)) });
          }}
        >
          <option value="">Pick a profile…</option>
          {choices.map((c) => (
            <option key={c.profileId} value={c.profileId}>
              {c.label}
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
              {versionLabel(v)}
            </option>
          ))}
        </select>
      </div>
      <Button
        variant="primary"
        onClick={onStart}
        disabled={!canStart || picked.versionId === null || !versions.some((v) => v.id === picked.versionId) || picked.versionId === drivenVersionId}
      >
        {isDriving ? "Switch to this version" : "Start driving"}
      </Button>
      {isDriving && picked.versionId === drivenVersionId ? <p className="self-center text-xs text-ink-300">You are driving this version.</p> : null}
    </div>
  );
}
