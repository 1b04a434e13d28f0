import { useState } from "react";
import { Link } from "react-router";
import { ArrowLeft, Check, FlaskConical, Archive, ShieldCheck, X } from "lucide-react";
import { CEILING_EVENT_KIND_LABELS, label as labelOf, labelForProfilePath, type ProfileVersion, type User } from "@jogwright/shared";
import { PageHeader } from "../../../components/layout/page-header.tsx";
import { Button } from "../../../components/ui/button.tsx";
import { Card } from "../../../components/ui/card.tsx";
import { Loading } from "../../../components/ui/loading.tsx";
import { Message } from "../../../components/ui/message.tsx";
import { formatDateTime } from "../../../lib/format.ts";
import { useArms } from "../../../lib/queries/arms.ts";
import { jointKindsOf } from "../../../lib/arm-joints.ts";
import { ParamsDiffTable, ParamsTable } from "../../../components/profiles/params-table.tsx";
import { Fact, ProfileFacts } from "../../../components/profiles/profile-facts.tsx";
import { VersionLabel } from "../../../components/profiles/version-state-badge.tsx";
import { EvidenceTable } from "../../../components/bench/evidence-table.tsx";
import { useVersionDetail } from "../../../lib/queries/profiles.ts";
import { drivesText, movesArm, versionArmText } from "../../../lib/version-arm.ts";
import type { Decision } from "../api/reviews-api.ts";
import { DecisionDialog } from "./decision-dialog.tsx";
import { ReconfirmDialog } from "./reconfirm-dialog.tsx";
import { DocumentTitle } from "../../../components/layout/document-title.tsx";

const DONE: Record<Decision, string> = { approve: "approved and locked", reject: "rejected", retire: "retired" };

export function ReviewPage({ versionId, user }: { versionId: number; user: User }) {
  const detail = useVersionDetail(versionId);
  const arms = useArms();
  const [decision, setDecision] = useState<Decision | null>(null);
  const [notice, setNotice] = useState<string | null>(null);
  const [isReconfirming, setReconfirming] = useState(false);

  if (detail.isPending) return <Loading label="Loading the version…" />;
  if (detail.isError) {
    return (
      <Message tone="stop" title="Could not load the version">
        {detail.error.message}
      </Message>
    );
  }
  const { version, profile, violations, approvedVersion, approval, evidence, ceilingEvents } = detail.data;
  const arm = arms.data?.find((a) => a.id === profile.armId);
  const jointKinds = jointKindsOf(arm);
  const label = `${profile.name} v${version.number}`;
  const isAuthor = version.authorId === user.id;
  const isSubmitted = version.state === "submitted";
  const decideBlocker = !isSubmitted
    ? `This version is ${labelOf("versionState", version.state).toLowerCase()}; only a submitted version can be approved or rejected.`
    : isAuthor
      ? "You wrote this version. Someone else must approve or reject it."
      : null;
  const approveBlocker = decideBlocker ?? (violations.length > 0 ? "It exceeds the site ceilings listed above, so it cannot be approved." : null);
  const isRollback = isSubmitted && approvedVersion !== null && approvedVersion.number > version.number;
  const reconfirmBlocker = isAuthor
    ? "You wrote this version. Another safety officer must re-confirm it."
    : violations.length > 0
      ? "It is still above the site ceilings listed above: approve a compliant version instead."
      : null;

  return (
    <>
      <DocumentTitle page={`Review ${label}`} />
      <Link to="/reviews" className="mb-3 inline-flex items-center gap-1 text-sm font-semibold text-iris-300 hover:underline">
        <ArrowLeft aria-hidden className="size-4" /> Review queue
      </Link>
      <PageHeader
        title={`Review: ${profile.name}`}
        description={
          <span className="flex flex-wrap items-center gap-x-4 gap-y-1 text-sm">
            <VersionLabel version={version} />
            <ProfileFacts profile={profile} />
            {versionArmText(version) ? <Fact label="Drives">{versionArmText(version)}</Fact> : null}
            <Fact label="Author">{version.authorName}</Fact>
            {version.submittedAt ? <span className="num">Submitted {formatDateTime(version.submittedAt)}</span> : null}
          </span>
        }
        actions={
          <Link to={`/profiles/${profile.id}`} className="text-sm font-semibold text-iris-300 hover:underline">
            Open the profile
          </Link>
        }
      />
      <div className="flex flex-col gap-6">
        {notice ? <Message tone="ok">{notice}</Message> : null}
        {approvedVersion && approvedVersion.id !== version.id && movesArm(version, approvedVersion) ? (
          <Message tone="warn" title="This version moves the profile to another arm revision or tool">
            v{version.number} drives {drivesText(version.armRevision!, version.toolName ?? null)}; the approved v{approvedVersion.number} drives{" "}
            {drivesText(approvedVersion.armRevision!, approvedVersion.toolName ?? null)}. The singularity thresholds and the ceilings check depend on
            the arm and the tool length: read the evidence as runs on the new one.
          </Message>
        ) : null}
        {version.note ? (
          <Message tone="info" title="Author's note">
            {version.note}
          </Message>
        ) : null}

        <Card title="Ceiling check" description="Against the site ceilings in force now.">
          {violations.length === 0 ? (
            <Message tone="ok" title="Within every site ceiling" />
          ) : (
            <Message tone="stop" title={`Exceeds ${violations.length === 1 ? "a site ceiling" : `${violations.length} site ceilings`}`}>
              <ul className="list-disc pl-4" data-testid="review-violations">
                {violations.map((v) => (
                  <li key={v.field}>
                    <strong>{labelForProfilePath(v.field)}</strong>: {v.message}
                  </li>
                ))}
              </ul>
            </Message>
          )}
        </Card>
        {version.state === "approved" && (version.exceedsCeilings || ceilingEvents.length > 0) ? (
          <Card
            title={version.exceedsCeilings ? "Flagged above the site ceilings" : "Flag history"}
            description={
              version.exceedsCeilings
                ? "The site ceilings were lowered below this approved version, so its operator cannot drive it. If it complies with the ceilings in force now, you may re-confirm it; the flag stays in its history."
                : "This version was flagged above the site ceilings and re-confirmed under them."
            }
          >
            <div className="flex flex-col gap-3">
              <ol className="flex flex-col gap-1 text-sm" data-testid="flag-history">
                {ceilingEvents.map((e) => (
                  <li key={e.id} data-kind={e.kind}>
                    <span className="num text-ink-300">{formatDateTime(e.at)}</span> · <strong>{CEILING_EVENT_KIND_LABELS[e.kind]}</strong> (ceilings revision{" "}
                    <span className="num">{e.ceilingsRevision}</span>){e.actorName ? <> by {e.actorName}</> : null}: <span className="text-ink-300">“{e.comment}”</span>
                  </li>
                ))}
              </ol>
              {version.exceedsCeilings ? (
                <div className="flex flex-col gap-2">
                  {reconfirmBlocker ? <Message tone="warn">{reconfirmBlocker}</Message> : null}
                  <div>
                    <Button variant="primary" disabled={reconfirmBlocker !== null} title={reconfirmBlocker ?? undefined} onClick={() => setReconfirming(true)}>
                      <ShieldCheck aria-hidden className="size-4" /> Re-confirm under current ceilings…
                    </Button>
                  </div>
                </div>
              ) : null}
            </div>
          </Card>
        ) : null}
        <Card
          title="Trial evidence"
          description="The runs this version was submitted with: the same motion gate and control step as live jogging, offline on the server. Simulation only."
          actions={
            <Link to={`/reviews/${version.id}/report`} className="text-sm font-semibold text-iris-300 hover:underline">
              Printable report
            </Link>
          }
        >
          <div data-testid="evidence">
            {evidence.length === 0 ? (
              <div className="flex items-start gap-3 text-sm text-ink-300">
                <FlaskConical aria-hidden className="mt-0.5 size-4 shrink-0 text-ink-400" />
                <p>{version.state === "draft" ? "Runs are attached when the version is submitted." : "No trial evidence attached: the site required none when it was submitted."}</p>
              </div>
            ) : (
              <EvidenceTable runs={evidence} caption={`The ${evidence.length} runs ${label} was submitted with`} />
            )}
          </div>
        </Card>

        <Card title="Identity" description="The SHA-256 of the parameters' canonical JSON. An approval records it and is refused if it no longer matches.">
          <p className="num text-sm break-all text-ink-100" data-testid="params-hash">
            {version.paramsSha256}
          </p>
          {approval ? (
            <p className="mt-2 text-sm text-ink-300">
              Approved by <strong className="text-ink-100">{approval.approverName}</strong> on <span className="num">{formatDateTime(approval.approvedAt)}</span>: “
              {approval.comment}”
            </p>
          ) : version.decidedByName ? (
            <p className="mt-2 text-sm text-ink-300">
              {version.state === "rejected" ? "Rejected" : "Decided"} by <strong className="text-ink-100">{version.decidedByName}</strong>
              {version.decidedAt ? <span className="num"> on {formatDateTime(version.decidedAt)}</span> : null}
              {version.decisionComment ? <>: “{version.decisionComment}”</> : null}
            </p>
          ) : null}
        </Card>

        <Card
          title={approvedVersion ? `Difference to the approved version v${approvedVersion.number}` : "Difference to the approved version"}
          description={approvedVersion ? "Changed rows are marked." : undefined}
        >
          {approvedVersion && approvedVersion.id !== version.id ? (
            <ParamsDiffTable
              before={approvedVersion.params}
              after={version.params}
              beforeLabel={`v${approvedVersion.number} (approved)`}
              afterLabel={`v${version.number} (this)`}
              jointKinds={jointKinds}
            />
          ) : approvedVersion ? (
            <p className="text-sm text-ink-300">This is the approved version.</p>
          ) : (
            <p className="text-sm text-ink-300">No version of this profile is approved yet; every parameter below is new.</p>
          )}
        </Card>

        <Card title="Decision">
          <div className="flex flex-col gap-3">
            {decideBlocker ? <Message tone="warn">{decideBlocker}</Message> : null}
            {!decideBlocker && approveBlocker ? <Message tone="warn">{approveBlocker}</Message> : null}
            {!approveBlocker && isRollback ? (
              <Message tone="warn" title={`Approving this rolls back to v${version.number}`}>
                v{approvedVersion!.number} is approved now and newer; approving v{version.number} supersedes it.
              </Message>
            ) : null}
            <div className="flex flex-wrap gap-2">
              <Button variant="primary" disabled={approveBlocker !== null} title={approveBlocker ?? undefined} onClick={() => setDecision("approve")}>
                <Check aria-hidden className="size-4" /> {isRollback ? `Roll back to v${version.number}…` : "Approve…"}
              </Button>
              <Button variant="danger" disabled={decideBlocker !== null} title={decideBlocker ?? undefined} onClick={() => setDecision("reject")}>
                <X aria-hidden className="size-4" /> Reject…
              </Button>
              {version.state === "approved" ? (
                <Button onClick={() => setDecision("retire")}>
                  <Archive aria-hidden className="size-4" /> Retire…
                </Button>
              ) : null}
            </div>
          </div>
        </Card>
        <Card title={`Parameters of v${version.number}`} description="In the units of the form; stored in SI units.">
          <ParamsTable params={version.params} jointKinds={jointKinds} caption={`Parameters of ${label}`} />
        </Card>

      </div>
      <DecisionDialog
        decision={decision}
        version={version}
        label={label}
        approvedVersion={approvedVersion}
        onClose={() => setDecision(null)}
        onDone={(d, v: ProfileVersion) => setNotice(`${profile.name} v${v.number} is ${DONE[d]}.`)}
      />
      <ReconfirmDialog
        open={isReconfirming}
        version={version}
        label={label}
        onClose={() => setReconfirming(false)}
        onDone={(v) => setNotice(`${profile.name} v${v.number} is re-confirmed under the current ceilings; its operator can drive it again.`)}
      />
    </>
  );
}
