import { useCallback, useEffect, useState } from "react";
import { Link } from "react-router";
import { useQuery } from "@tanstack/react-query";
import { DEFAULT_GAMEPAD_MAPPING, hasAnyRole } from "@jogwright/shared";
import { PageHeader } from "../../../components/layout/page-header.tsx";
import { Message } from "../../../components/ui/message.tsx";
import { describeEnded, jogClient, useJogSnapshot } from "../../../lib/jog-socket.ts";
import { useArms } from "../../../lib/queries/arms.ts";
import { useCurrentUser } from "../../../lib/session.ts";
import { gamepadMappingQueryOptions } from "../api/drive-api.ts";
import { profileDetailQueryOptions, profileListQueryOptions } from "../../../lib/queries/profiles.ts";
import { jogInput } from "../input/jog-input.ts";
import { ConnectionState, DriveWorkspace, UnapprovedBanner } from "../../../components/jog/drive-workspace.tsx";
import { GamepadMappingDialog } from "./gamepad-mapping-dialog.tsx";
import { EnablingButton, JogControls, StopControls } from "./jog-controls.tsx";
import { VersionPicker, type PickedVersion } from "./version-picker.tsx";
import { QueryStatus } from "../../../components/ui/query-status.tsx";

/** How long "End session" waits for the server's "ended" (with the recording id) before closing. */
const END_WAIT_MS = 1500;

export function DrivePage() {
  const user = useCurrentUser();
  const isEngineer = hasAnyRole(user.roles, ["engineer"]);
  const snapshot = useJogSnapshot();
  const profiles = useQuery(profileListQueryOptions());
  const arms = useArms();
  const mapping = useQuery(gamepadMappingQueryOptions());
  const [picked, setPicked] = useState<PickedVersion>({ profileId: null, versionId: null });
  const [isMappingOpen, setMappingOpen] = useState(false);

  const session = snapshot.session;
  const isDriving = session !== null && !session.isWatching;
  const profileId = session?.profileId ?? picked.profileId;
  const versionId = session?.versionId ?? picked.versionId;
  const detail = useQuery(profileDetailQueryOptions(profileId));
  const version = detail.data?.versions.find((v) => v.id === versionId) ?? null;
  const params = version?.params ?? null;
  const profileSummary = profiles.data?.find((p) => p.id === profileId) ?? null;
  const armId = session?.armId ?? profileSummary?.armId ?? null;
  const arm = arms.data?.find((a) => a.id === armId) ?? null;

  // One socket and one input loop while the page is open.
  useEffect(() => {
    jogClient.connect();
    jogInput.start();
    return () => {
      jogInput.stop();
      jogClient.disconnect();
    };
  }, []);

  useEffect(() => {
    jogInput.configure({ mapping: mapping.data ?? DEFAULT_GAMEPAD_MAPPING });
  }, [mapping.data]);

  useEffect(() => {
    jogInput.configure({ isReadOnly: !isDriving || isMappingOpen });
  }, [isDriving, isMappingOpen]);

  // A new driving session first hears that nothing is held, so the first press of the enabling control
  // counts as a fresh press.
  const drivenSessionId = isDriving ? session.sessionId : null;
  useEffect(() => {
    if (drivenSessionId) jogInput.announceReleased();
  }, [drivenSessionId]);

  useEffect(() => {
    if (arm) {
      jogInput.configure({ axisCount: arm.model.joints.length });
      jogClient.setJointTypes(arm.model.joints.map((j) => j.type));
    }
  }, [arm]);

  // A new session starts at the version's default override, bounded by its maximum.
  const sessionId = session?.sessionId ?? null;
  useEffect(() => {
    if (sessionId && params) {
      jogInput.configure({ maxOverridePercent: params.speedOverride.maxPercent, overridePercent: params.speedOverride.defaultPercent });
    }
  }, [sessionId, params]);

  function endSession() {
    jogInput.releaseAll();
    jogClient.command("stop");
    // The server answers with "ended" (and the recording id); if it does not, closing ends it too.
    setTimeout(() => {
      if (jogClient.getSnapshot().session) {
        jogClient.disconnect();
        jogClient.connect();
      }
    }, END_WAIT_MS);
  }

  const openMapping = useCallback(() => setMappingOpen(true), []);
  const frame = snapshot.state;
  return (
    <>
      <PageHeader
        title="Drive"
        description="Jog the simulated arm's tool with a gamepad, the keyboard or the controls below. Motion needs the enabling control held the whole time."
        actions={<ConnectionState snapshot={snapshot} />}
      />
      <div className="flex flex-col gap-4">
        <QueryStatus query={profiles} isPending={profiles.isPending || arms.isPending} loading="Loading your profiles…" failed="Could not load the profiles" />
        {profiles.data ? (
          <VersionPicker
            isEngineer={isEngineer}
            picked={picked}
            onPick={setPicked}
            onStart={() => picked.versionId !== null && jogClient.start(picked.versionId)}
            isDriving={isDriving}
            canStart={snapshot.connection === "open"}
          />
        ) : null}
        {session?.isUnapproved ? <UnapprovedBanner versionNumber={session.versionNumber} versionState={session.versionState} /> : null}
        {session ? (
          <p className="text-sm text-ink-300" data-testid="session-info">
            Driving <span className="font-semibold text-ink-100">{session.profileName}</span>, version{" "}
            <span className="num text-ink-100">{session.versionNumber}</span> on{" "}
            <span className="font-semibold text-ink-100">{session.armName}</span> · watchdog{" "}
            <span className="num text-ink-100">{session.watchdogMs}</span> ms · control{" "}
            <span className="num text-ink-100">{session.tickRateHz}</span> Hz
          </p>
        ) : null}
        {snapshot.error ? (
          <Message tone="stop" title="The server refused or failed">
            {snapshot.error.message} <span className="num text-xs text-ink-400">({snapshot.error.code})</span>
          </Message>
        ) : null}
        {snapshot.ended ? (
          <Message tone="info" title="Session ended">
            {describeEnded(snapshot.ended)}{" "}
            {snapshot.ended.recordingId !== null ? (
              <Link className="text-iris-300 underline" to={`/recordings?recording=${snapshot.ended.recordingId}`}>
                Open its recording
              </Link>
            ) : null}
          </Message>
        ) : null}
        {arm ? (
          <DriveWorkspace
            arm={arm}
            params={params}
            frame={frame}
            source={jogClient}
            side={
              <>
                <StopControls frame={frame} isDriving={isDriving} onEndSession={endSession} />
                <EnablingButton disabled={!isDriving} />
              </>
            }
            controls={
              <JogControls jointCount={arm.model.joints.length} disabled={!isDriving} onEditMapping={openMapping} />
            }
          />
        ) : profiles.data && !session ? (
          <Message>Pick a profile and a version, then start driving.</Message>
        ) : null}
      </div>
      <GamepadMappingDialog open={isMappingOpen} onClose={() => setMappingOpen(false)} mapping={mapping.data ?? DEFAULT_GAMEPAD_MAPPING} />
    </>
  );
}
