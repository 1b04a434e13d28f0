import { useMemo, useRef, useState, type ReactNode } from "react";
import { Link } from "react-router";
import { ArrowLeft, Save } from "lucide-react";
import {
  labelForProfilePath,
  VERSION_STATE_LABELS,
  type Arm,
  type Ceilings,
  type ProfileParams,
  type ProfileVersion,
  type User,
} from "@jogwright/shared";
import { PageHeader } from "../../../components/layout/page-header.tsx";
import { Button, SubmitButton } from "../../../components/ui/button.tsx";
import { Card } from "../../../components/ui/card.tsx";
import { FormFooter } from "../../../components/ui/form-footer.tsx";
import { Loading } from "../../../components/ui/loading.tsx";
import { Message } from "../../../components/ui/message.tsx";
import { isApiRequestError } from "../../../lib/api-client.ts";
import { formatDateTime } from "../../../lib/format.ts";
import { armAtRevision } from "../../../lib/arm-revision.ts";
import { useArmDetail, useArms } from "../../../lib/queries/arms.ts";
import { useCeilings } from "../../../lib/queries/ceilings.ts";
import type { ProfileDetail } from "@jogwright/shared";
import { useProfile, useSaveVersion, useSubmitVersion } from "../hooks/use-profiles.ts";
import { WithdrawDialog } from "./withdraw-dialog.tsx";
import { armChoiceFields, describeArmMove, draftSubmitBlockers, fitParamsToJoints } from "../forms/arm-choice.ts";
import { armChoiceOf, isSameChoice, type ArmChoice } from "../../../lib/version-arm.ts";
import { ArmRevisionFields } from "./arm-revision-fields.tsx";
import { SelectField } from "../../../components/ui/select-field.tsx";
import { jointKindsOf } from "../../../lib/arm-joints.ts";
import { CompareVersions, type ComparePair } from "./compare-versions.tsx";
import { ParamsDiffTable, ParamsTable } from "../../../components/profiles/params-table.tsx";
import { ProfileParamsForm } from "./profile-params-form.tsx";
import { VersionHistoryTable } from "./version-history-table.tsx";
import { ImportVersionFileButton, useVersionFileImport, VersionFileImportOutcome } from "./version-file-import.tsx";
import { ProfileFacts } from "../../../components/profiles/profile-facts.tsx";
import { VersionLabel } from "../../../components/profiles/version-state-badge.tsx";
import { DocumentTitle } from "../../../components/layout/document-title.tsx";

export function ProfileDetailPage({ profileId, user }: { profileId: number; user: User }) {
  const profile = useProfile(profileId);
  const arms = useArms();
  const ceilings = useCeilings();

  if (profile.isPending || arms.isPending) return <Loading label="Loading the profile…" />;
  if (profile.isError) {
    return (
      <Message tone="stop" title="Could not load the profile">
        {profile.error.message}
      </Message>
    );
  }
  if (arms.isError) {
    return (
      <Message tone="stop" title="Could not load the arms">
        {arms.error.message}
      </Message>
    );
  }
  const arm = arms.data.find((a) => a.id === profile.data.profile.armId);
  if (!arm) {
    return <Message tone="stop" title="This profile's arm is missing">The arm {profile.data.profile.armName} is not in the arm list.</Message>;
  }
  return <ProfileDetail detail={profile.data} arm={arm} ceilings={ceilings.data?.ceilings} user={user} />;
}

function ProfileDetail({ detail, arm, ceilings, user }: { detail: ProfileDetail; arm: Arm; ceilings: Ceilings | undefined; user: User }) {
  const { profile, versions } = detail;
  const isEngineer = user.roles.includes("engineer");
  const isSafetyOfficer = user.roles.includes("safety_officer");
  const jointKinds = jointKindsOf(arm);
  const driveable = versions.find((v) => v.id === profile.driveableVersionId) ?? null;
  const latest = versions[0]!;

  const submit = useSubmitVersion();
  const [notice, setNotice] = useState<string | null>(null);
  // Where the submission was asked for: its outcome shows there (the history table's Submit at the top,
  // or the form's footer after "Saved as vN"), not 2,500 px away (issue 13, item 10).
  const [submitOrigin, setSubmitOrigin] = useState<"history" | "form">("history");
  const [pair, setPair] = useState<ComparePair>(() => ({ fromId: (versions[1] ?? latest).id, toId: latest.id }));
  const [withdrawing, setWithdrawing] = useState<ProfileVersion | null>(null);
  const compareRef = useRef<HTMLDivElement>(null);
  // The draft a version file was imported as (issue 12): opened in Compare, and marked in the list while
  // that import is the last outcome shown.
  const versionFile = useVersionFileImport(profile.id, (v) => {
    setNotice(null);
    setPair({ fromId: v.parentVersionId ?? v.id, toId: v.id });
  });
  const importedId = versionFile.outcome?.kind === "imported" ? versionFile.outcome.version.id : null;

  // Each draft is checked against the arm revision and tool it drives, as the server checks it on submit.
  const armDetail = useArmDetail(arm.id);
  const submitBlockers = useMemo(
    () => (ceilings ? draftSubmitBlockers(versions, ceilings, arm, armDetail.data) : new Map<number, string>()),
    [versions, ceilings, arm, armDetail.data],
  );

  const onSubmit = (version: ProfileVersion, origin: "history" | "form" = "history") => {
    setSubmitOrigin(origin);
    setNotice(null);
    submit.mutate(version.id, { onSuccess: (v) => setNotice(`v${v.number} is submitted for review. A safety officer decides next.`) });
  };

  return (
    <>
      <DocumentTitle page={profile.name} />
      <Link to="/profiles" className="mb-3 inline-flex items-center gap-1 text-sm font-semibold text-iris-300 hover:underline">
        <ArrowLeft aria-hidden className="size-4" /> All profiles
      </Link>
      <PageHeader
        title={profile.name}
        description={
          <span className="flex flex-wrap items-center gap-x-4 gap-y-1 text-sm">
            <ProfileFacts profile={profile} />
            <span className="flex items-center gap-2" data-testid="driveable-version">
              Driveable {driveable ? <VersionLabel version={driveable} /> : <strong className="text-ink-100">none yet</strong>}
            </span>
          </span>
        }
      />
      <div className="flex flex-col gap-6">
        {notice && submitOrigin === "history" ? <Message tone="ok">{notice}</Message> : null}
        {submit.isError && submitOrigin === "history" ? <SubmitError error={submit.error} /> : null}

        <Card
          title="Versions"
          description="Every save is a new version. Approved versions are locked. Export downloads a version as a JSON file."
          actions={isEngineer ? <ImportVersionFileButton onChoose={(file) => void versionFile.choose(file)} isPending={versionFile.isPending} /> : undefined}
        >
          {isEngineer && versionFile.outcome ? (
            <div className="mb-4">
              <VersionFileImportOutcome outcome={versionFile.outcome} />
            </div>
          ) : null}
          <VersionHistoryTable
            selectedVersionId={importedId}
            versions={versions}
            submitBlockers={submitBlockers}
            canSubmit={isEngineer}
            canReview={isSafetyOfficer}
            isSubmitting={submit.isPending}
            onSubmit={onSubmit}
            user={user}
            operatorId={profile.operatorId}
            onWithdraw={(v) => {
              setNotice(null);
              setWithdrawing(v);
            }}
            onCompare={(v) => {
              setPair({ fromId: v.parentVersionId ?? v.id, toId: v.id });
              compareRef.current?.scrollIntoView({ block: "start" });
            }}
          />
        </Card>

        {isEngineer ? (
          <NewVersionCard
            key={profile.id}
            profileId={profile.id}
            versions={versions}
            arm={arm}
            ceilings={ceilings}
            onSaved={(v) => {
              setNotice(null);
              setPair({ fromId: v.parentVersionId ?? v.id, toId: v.id });
            }}
            onSubmit={(v) => onSubmit(v, "form")}
            isSubmitting={submit.isPending}
            submitBlockers={submitBlockers}
            submitFeedback={
              submitOrigin !== "form" || submit.isIdle || submit.isPending
                ? null
                : {
                    key: `submit-${submit.submittedAt}-${submit.status}`,
                    node: submit.isError ? <SubmitError error={submit.error} /> : notice ? <Message tone="ok">{notice}</Message> : null,
                  }
            }
          />
        ) : driveable ? (
          <Card
            title={`Parameters of v${driveable.number}`}
            description={user.id === profile.operatorId ? "The approved version you drive with." : `The approved version ${profile.operatorName} drives with.`}
          >
            <ParamsTable params={driveable.params} jointKinds={jointKinds} caption={`Parameters of v${driveable.number}`} />
          </Card>
        ) : null}

        <WithdrawDialog
          version={withdrawing}
          onClose={() => setWithdrawing(null)}
          onDone={(v) => {
            setSubmitOrigin("history");
            setNotice(`v${v.number} is withdrawn from review. It stays in the history with your note.`);
          }}
        />

        <div ref={compareRef} className="scroll-mt-4">
          <Card title="Compare versions" description="Any two versions side by side, field by field, in the units of the form.">
            <CompareVersions versions={versions} pair={pair} onPairChange={setPair} jointKinds={jointKinds} />
          </Card>
        </div>
      </div>
    </>
  );
}

function SubmitError({ error }: { error: Error }) {
  const issues = isApiRequestError(error) ? error.issues : [];
  return (
    <Message tone="stop" title="Not submitted">
      {error.message}
      {issues.length > 0 ? (
        <ul className="mt-1 list-disc pl-4">
          {issues.map((i) => (
            <li key={i.path}>
              <strong>{labelForProfilePath(i.path)}</strong>: {i.message}
            </li>
          ))}
        </ul>
      ) : null}
    </Message>
  );
}

interface StaleConflict {
  message: string;
  params: ProfileParams;
}

/**
 * The form for the next version. It is loaded from one version (the parent) and keeps it until the user
 * saves or chooses to load a newer one: a background refetch never replaces what is being edited. The
 * server refuses a save whose parent is no longer the latest (409 stale_parent); the edits then stay in
 * the form and the newer version can be compared or loaded.
 */
function NewVersionCard({
  profileId,
  versions,
  arm,
  ceilings,
  onSaved,
  onSubmit,
  isSubmitting,
  submitBlockers,
  submitFeedback,
}: {
  profileId: number;
  versions: ProfileVersion[];
  arm: Arm;
  ceilings: Ceilings | undefined;
  onSaved: (version: ProfileVersion) => void;
  onSubmit: (version: ProfileVersion) => void;
  isSubmitting: boolean;
  submitBlockers: Map<number, string>;
  /** The outcome of a submission asked for from this card's footer. */
  submitFeedback?: { key: string; node: ReactNode } | null;
}) {
  // The base to start from: the approved version by default (issue 13, item 5), else the newest.
  const [parent, setParent] = useState<ProfileVersion>(() => versions.find((v) => v.state === "approved") ?? versions[0]!);
  // The latest version when the base was chosen: the server's stale check (409 stale_parent) compares with it.
  const [seenLatestId, setSeenLatestId] = useState<number>(versions[0]!.id);
  const [saved, setSaved] = useState<ProfileVersion | null>(null);
  const [conflict, setConflict] = useState<StaleConflict | null>(null);
  const [isComparingConflict, setComparingConflict] = useState(false);
  const save = useSaveVersion(profileId);
  const latest = versions[0]!;
  const savedNow = saved ? (versions.find((v) => v.id === saved.id) ?? saved) : null;

  // The arm revision and tool (issue 12): the base version's unless the engineer picks others for this
  // version (a pick belongs to the base it was made on, so choosing another base starts from its own).
  const armDetail = useArmDetail(arm.id);
  const base = versions.find((v) => v.id === parent.id) ?? parent;
  const baseChoice = armChoiceOf(base);
  const [picked, setPicked] = useState<(ArmChoice & { baseId: number }) | null>(null);
  const armChoice = picked && picked.baseId === parent.id ? picked : baseChoice;
  const chosenRevision = armDetail.data?.revisions.find((r) => r.id === armChoice?.revisionId);
  const chosenToolName = armChoice?.toolId == null ? null : (chosenRevision?.tools.find((t) => t.id === armChoice.toolId)?.name ?? null);
  const armMove =
    chosenRevision && !isSameChoice(baseChoice, armChoice)
      ? describeArmMove(
          latest.number + 1,
          base.armRevision == null ? null : { number: base.number, revision: base.armRevision, toolName: base.toolName ?? null },
          { revision: chosenRevision.revision, toolName: chosenToolName },
        )
      : null;
  // The form checks the parameters against the arm this version will drive: that revision with that tool.
  // Memoized: the form's resolver and ceiling checks follow the arm object.
  const drivenArm = useMemo(() => armAtRevision(arm, armDetail.data, armChoice?.revisionId, armChoice?.toolId), [arm, armDetail.data, armChoice?.revisionId, armChoice?.toolId]);
  const jointKinds = jointKindsOf(drivenArm);
  const initialParams = useMemo(() => fitParamsToJoints(parent.params, drivenArm), [parent.params, drivenArm]);

  const onSave = (params: ProfileParams, note: string) => {
    setConflict(null);
    setSaved(null);
    save.mutate(
      { parentVersionId: parent.id, latestVersionId: seenLatestId, params, note, ...armChoiceFields(baseChoice, armChoice) },
      {
        onSuccess: (version) => {
          setSaved(version);
          setParent(version);
          setSeenLatestId(version.id);
          onSaved(version);
        },
        onError: (error) => {
          // Other errors: the form puts a 400's issues on its fields (serverError below).
          if (isApiRequestError(error) && error.code === "stale_parent") {
            setConflict({ message: error.message, params });
            setComparingConflict(false);
          }
        },
      },
    );
  };

  const otherError = save.isError && !conflict ? save.error : null;
  const isNewerAvailable = latest.id !== seenLatestId;
  const startFrom = (version: ProfileVersion) => {
    setParent(version);
    setSeenLatestId(latest.id);
    setConflict(null);
    save.reset();
  };

  // One outcome at a time, the newest: a submission from here, a refused save, or the save itself.
  const feedback: { key: string; node: ReactNode } | null = submitFeedback?.node
    ? submitFeedback
    : conflict
      ? {
          key: `conflict-${save.submittedAt}`,
          node: (
            <div className="flex flex-col gap-3">
              <Message tone="stop" title={`Not saved: a newer version exists (v${latest.number})`}>
                <p>{conflict.message}</p>
                <p>
                  Someone saved <strong>v{latest.number}</strong> after you started from <strong>v{parent.number}</strong>. Nothing was overwritten, and your edits are
                  still in the form. Compare them with v{latest.number}, or load v{latest.number} and make your changes again.
                </p>
                <div className="mt-2 flex flex-wrap gap-2">
                  <Button size="sm" onClick={() => setComparingConflict((x) => !x)} aria-expanded={isComparingConflict}>
                    {isComparingConflict ? "Hide the comparison" : `Compare my edits with v${latest.number}`}
                  </Button>
                  <Button size="sm" variant="ghost" onClick={() => startFrom(latest)}>
                    Load v{latest.number} (discards my edits)
                  </Button>
                </div>
              </Message>
              {isComparingConflict ? (
                <ParamsDiffTable before={latest.params} after={conflict.params} beforeLabel={`v${latest.number} (saved)`} afterLabel="Your edits" jointKinds={jointKinds} />
              ) : null}
            </div>
          ),
        }
      : otherError
        ? {
            key: `error-${save.submittedAt}`,
            node: (
              <Message tone="stop" title="Not saved">
                {otherError.message}
              </Message>
            ),
          }
        : savedNow
          ? {
              key: `saved-${savedNow.id}`,
              node: (
                <Message tone="ok" title={`Saved as v${savedNow.number} (${VERSION_STATE_LABELS.draft.toLowerCase()})`}>
                  <div className="mt-1 flex flex-wrap items-center gap-2">
                    {savedNow.state === "draft" ? (
                      <Button
                        size="sm"
                        variant="primary"
                        disabled={isSubmitting || submitBlockers.has(savedNow.id)}
                        title={submitBlockers.get(savedNow.id)}
                        onClick={() => onSubmit(savedNow)}
                      >
                        Submit v{savedNow.number} for review
                      </Button>
                    ) : (
                      <span>
                        Now <strong>{VERSION_STATE_LABELS[savedNow.state].toLowerCase()}</strong>.
                      </span>
                    )}
                  </div>
                </Message>
              ),
            }
          : null;

  return (
    <Card
      title="New version"
      description={
        <>
          Starts from <span className="num text-ink-100">v{parent.number}</span> ({VERSION_STATE_LABELS[parent.state].toLowerCase()},{" "}
          {formatDateTime(parent.createdAt)}). Values are in the units shown; they are stored in SI units.
        </>
      }
    >
      <div className="flex flex-col gap-4">
        {!conflict && isNewerAvailable && !savedNow ? (
          <Message tone="warn" title={`v${latest.number} was saved after you started from v${parent.number}`}>
            <Button size="sm" variant="ghost" onClick={() => startFrom(latest)}>
              Load v{latest.number} (discards my edits)
            </Button>
          </Message>
        ) : null}

        <div className="grid gap-4 md:grid-cols-3">
          <SelectField
            label="Start from"
            hint="The version whose parameters the form starts with. Changing it discards unsaved edits."
            value={parent.id}
            onChange={(event) => {
              const chosen = versions.find((v) => v.id === Number(event.target.value));
              if (chosen) startFrom(chosen);
            }}
          >
            {versions.map((v) => (
              <option key={v.id} value={v.id}>
                {`v${v.number} · ${VERSION_STATE_LABELS[v.state]}${v.exceedsCeilings ? " · above ceilings" : ""}${v.id === latest.id ? " · newest" : ""}`}
              </option>
            ))}
          </SelectField>
          <ArmRevisionFields
            detail={armDetail.data}
            value={armChoice}
            base={baseChoice}
            onChange={(choice) => setPicked({ ...choice, baseId: parent.id })}
            revisionHint={`v${parent.number}'s revision by default. Another one moves the new version to it; it is reviewed like any new version.`}
          />
        </div>
        {armDetail.isError ? (
          <Message tone="warn" title="Could not load the arm's revisions">
            The new version keeps v{parent.number}'s revision and tool. {armDetail.error.message}
          </Message>
        ) : null}
        {armMove ? (
          <div data-testid="arm-move">
            <Message title={`Moves to revision ${chosenRevision!.revision}${chosenToolName ? ` with "${chosenToolName}"` : ""}`}>{armMove}</Message>
          </div>
        ) : null}

        {armDetail.isPending ? (
          <Loading label="Loading the arm's revisions…" />
        ) : (
          <ProfileParamsForm
            // Again when the joints change (another revision may have other joints): their fields and units follow them.
            key={`${parent.id}-${drivenArm.model.joints.map((j) => j.type).join(",")}`}
            formId="new-version-form"
            arm={drivenArm}
            ceilings={ceilings}
            initialParams={initialParams}
            serverError={save.error}
            onSave={onSave}
            footer={({ violations }) => (
              // The outcome of Save (and of Submit from here) shows beside the button, in view, with focus
              // moved to it (issue 13, item 10): the footer stays at the bottom of the window.
              <FormFooter feedback={feedback?.node} feedbackKey={feedback?.key ?? null}>
                {violations.length > 0 ? <span className="text-sm text-warn-400">Saves as a draft only; fix the ceilings before submitting.</span> : null}
                <SubmitButton icon={Save} isPending={save.isPending} pendingLabel="Saving…">
                  Save new version
                </SubmitButton>
              </FormFooter>
            )}
          />
        )}
      </div>
    </Card>
  );
}
