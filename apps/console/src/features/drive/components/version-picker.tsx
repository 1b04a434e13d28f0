import { useId, type ReactNode } from "react";
import { useQuery } from "@tanstack/react-query";
import { label, type DriveableVersion } from "@jogwright/shared";
import { Button } from "../../../components/ui/button.tsx";
import { Loading } from "../../../components/ui/loading.tsx";
import { Message } from "../../../components/ui/message.tsx";
import { Options } from "../../../components/ui/select-field.tsx";
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

/** One of the picker's two selects (profile, version): its value an id, or null while none is picked (""). */
function PickerSelect({ id, labelText, value, disabled, onChange, children }: {
  id: string;
  labelText: string;
  value: number | null;
  disabled?: boolean;
  onChange: (value: number | null) => void;
  children: ReactNode;
}) {
  return (
    <div className="flex flex-col gap-1 text-sm font-semibold text-ink-100">
      <label htmlFor={id}>{labelText}</label>
      <select id={id} className={selectClass} value={value ?? ""} disabled={disabled} onChange={(event) => onChange(event.target.value === "" ? null : Number(event.target.value))}>
        {children}
      </select>
    </div>
  );
}

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
      <PickerSelect
        id={`${id}-profile`}
        labelText="Profile"
        value={picked.profileId}
        onChange={(profileId) => onPick({ profileId, versionId: defaultVersionOf(choices.find((c) => c.profileId === profileId)) })}
      >
        <option value="">Pick a profile…</option>
        <Options items={choices} valueFor={(c) => c.profileId} labelOf={(c) => c.label} />
      </PickerSelect>
      <PickerSelect id={`${id}-version`} labelText="Version" value={picked.versionId} disabled={!profile} onChange={(versionId) => onPick({ ...picked, versionId })}>
        {versions.length === 0 ? <option value="">—</option> : null}
        <Options items={versions} valueFor={(v) => v.id} labelOf={versionLabel} />
      </PickerSelect>
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
