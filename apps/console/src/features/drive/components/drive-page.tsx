import { useCallback, useEffect, useMemo, useState } from "react";
import { Link, useSearchParams } from "react-router";
import { useQuery, useQueryClient } from "@tanstack/react-query";
import { DEFAULT_GAMEPAD_MAPPING, hasAnyRole, type JointKind } from "@jogwright/shared";
import { PageHeader } from "../../../components/layout/page-header.tsx";
import { Message } from "../../../components/ui/message.tsx";
import { describeEnded, jogClient, jogErrorTitle, useJogSnapshot } from "../../../lib/jog-socket.ts";
import { armAtRevision } from "../../../lib/arm-revision.ts";
import { useArmDetail, useArms } from "../../../lib/queries/arms.ts";
import { storeSession, useCurrentUser } from "../../../lib/session.ts";
import { driveableVersionsQueryOptions, gamepadMappingQueryOptions } from "../api/drive-api.ts";
import { profileDetailQueryOptions, profileListQueryOptions } from "../../../lib/queries/profiles.ts";
import { jogInput } from "../input/jog-input.ts";
import { ConnectionState, DriveWorkspace, UnapprovedBanner } from "../../../components/jog/drive-workspace.tsx";
import { GamepadMappingDialog } from "./gamepad-mapping-dialog.tsx";
import { EnablingButton, JogControls, StopControls } from "./jog-controls.tsx";
import { AddressVersionRefusal, parseVersionParam } from "./address-version.tsx";
import { VersionPicker, type PickedVersion } from "./version-picker.tsx";
import { QueryStatus } from "../../../components/ui/query-status.tsx";

/** How long "End session" waits for the server's "ended" (with the recording id) before closing. */
const END_WAIT_MS = 1500;

/** Ends the person did not ask for: said as a caution, not as news. */
const UNASKED_ENDS = new Set(["account-deactivated", "signed-out", "session-expired", "profile-not-driveable", "roles-changed", "disconnected", "simulation-failed", "server-shutdown"]);

export function DrivePage() {
  const user = useCurrentUser();
  const isEngineer = hasAnyRole(user.roles, ["engineer"]);
  const snapshot = useJogSnapshot();
  const profiles = useQuery(profileListQueryOptions());
  const arms = useArms();
  const mapping = useQuery(gamepadMappingQueryOptions());
  const [picked, setPicked] = useState<PickedVersion>({ profileId: null, versionId: null });
  const [isMappingOpen, setMappingOpen] = useState(false);
  const queryClient = useQueryClient();

  // ?version=<id> (the profile page's "Test-drive this version"): picked once the list of what this person
  // may drive is here, when it is in it; otherwise AddressVersionRefusal says why.
  const [searchParams] = useSearchParams();
  const versionParam = searchParams.get("version");
  const addressVersionId = parseVersionParam(versionParam);
  const driveable = useQuery(driveableVersionsQueryOptions());
  const [appliedParam, setAppliedParam] = useState<string | null>(null);
  if (versionParam !== null && versionParam !== appliedParam && driveable.data) {
    setAppliedParam(versionParam);
    const fromAddress = driveable.data.find((v) => v.id === addressVersionId);
    if (fromAddress) setPicked({ profileId: fromAddress.profileId, versionId: fromAddress.id });
  }
  const isAddressVersionDriveable = driveable.data?.some((v) => v.id === addressVersionId) ?? true;

  const session = snapshot.session;
  const isDriving = session !== null && !session.isWatching;
  const profileId = session?.profileId ?? picked.profileId;
  const versionId = session?.versionId ?? picked.versionId;
  const detail = useQuery(profileDetailQueryOptions(profileId));
  const version = detail.data?.versions.find((v) => v.id === versionId) ?? null;
  const params = version?.params ?? null;
  const profileSummary = profiles.data?.find((p) => p.id === profileId) ?? null;
  const armId = session?.armId ?? profileSummary?.armId ?? null;
  const listedArm = arms.data?.find((a) => a.id === armId) ?? null;
  // The session's arm revision and tool (issue 12): the 3D view draws the arm the version was saved on.
  const armDetail = useArmDetail(session?.armRevisionId != null ? session.armId : null);
  const arm = useMemo(
    () => (listedArm ? armAtRevision(listedArm, armDetail.data, session?.armRevisionId, session?.toolId) : null),
    [listedArm, armDetail.data, session?.armRevisionId, session?.toolId],
  );

  // Signed out (4401: here, elsewhere, expired, or never signed in): the socket stays closed, and the
  // session guard sends the person to sign in and back here after.
  const isSignedOut = snapshot.error?.code === "signed_out";
  useEffect(() => {
    if (isSignedOut) storeSession(queryClient, { user: null, hasSignedOut: false });
  }, [isSignedOut, queryClient]);

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

  // By the joint types, not the arm object: the arm is built again when its revision's detail arrives, and
  // setting the types resets the charts' trace.
  const jointTypes = arm ? arm.model.joints.map((j) => j.type).join(",") : null;
  useEffect(() => {
    if (jointTypes) {
      const types = jointTypes.split(",") as JointKind[];
      jogInput.configure({ axisCount: types.length });
      jogClient.setJointTypes(types);
    }
  }, [jointTypes]);

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
            drivenVersionId={isDriving ? session.versionId : null}
            canStart={snapshot.connection === "open"}
          />
        ) : null}
        {versionParam !== null && !isAddressVersionDriveable ? (
          <AddressVersionRefusal versionParam={versionParam} versionId={addressVersionId} user={user} />
        ) : null}
        {session?.isUnapproved ? <UnapprovedBanner versionNumber={session.versionNumber} versionState={session.versionState} /> : null}
        {session ? (
          <p className="text-sm text-ink-300" data-testid="session-info">
            Driving <span className="font-semibold text-ink-100">{session.profileName}</span>, version{" "}
            <span className="num text-ink-100">{session.versionNumber}</span> on{" "}
            <span className="font-semibold text-ink-100">{session.armName}</span>
            {session.armRevision != null ? (
              <>
                {" "}
                <span data-testid="session-arm-revision">revision <span className="num text-ink-100">{session.armRevision}</span></span>
              </>
            ) : null}
            {session.armRevision != null || session.toolName != null ? (
              <>
                {" "}with <span data-testid="session-tool" className="font-semibold text-ink-100">{session.toolName ?? "its flange as the tool"}</span>
              </>
            ) : null}{" "}
            · watchdog{" "}
            <span className="num text-ink-100">{session.watchdogMs}</span> ms · control{" "}
            <span className="num text-ink-100">{session.tickRateHz}</span> Hz
          </p>
        ) : null}
        {snapshot.error ? (
          <Message tone="stop" title={jogErrorTitle(snapshot.error.code)}>
            <span data-testid="jog-error" data-code={snapshot.error.code}>{snapshot.error.message}</span>
          </Message>
        ) : null}
        {snapshot.ended ? (
          <Message tone={UNASKED_ENDS.has(snapshot.ended.reason) ? "warn" : "info"} title="Session ended">
            <span data-testid="session-ended" data-reason={snapshot.ended.reason}>{describeEnded(snapshot.ended)}</span>{" "}
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
            controls={<JogControls jointCount={arm.model.joints.length} disabled={!isDriving} onEditMapping={openMapping} />}
            side={
              <>
                <StopControls frame={frame} isDriving={isDriving} onEndSession={endSession} />
                <EnablingButton disabled={!isDriving} />
              </>
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
