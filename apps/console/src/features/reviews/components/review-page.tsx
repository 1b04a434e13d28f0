import { useState } from "react";
import { Link } from "react-router";
import { ArrowLeft, Check, FlaskConical, Archive, X } from "lucide-react";
import { labelForProfilePath, type ProfileVersion, type User } from "@jogwright/shared";
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
import type { Decision } from "../api/reviews-api.ts";
import { DecisionDialog } from "./decision-dialog.tsx";

const DONE: Record<Decision, string> = { approve: "approved and locked", reject: "rejected", retire: "retired" };

export function ReviewPage({ versionId, user }: { versionId: number; user: User }) {
  const detail = useVersionDetail(versionId);
  const arms = useArms();
  const [decision, setDecision] = useState<Decision | null>(null);
  const [notice, setNotice] = useState<string | null>(null);

  if (detail.isPending) return <Loading label="Loading the version…" />;
  if (detail.isError) {
    return (
      <Message tone="stop" title="Could not load the version">
        {detail.error.message}
      </Message>
    );
  }
  const { version, profile, violations, approvedVersion, approval, evidence } = detail.data;
  const arm = arms.data?.find((a) => a.id === profile.armId);
  const jointKinds = jointKindsOf(arm);
  const label = `${profile.name} v${version.number}`;
  const isAuthor = version.authorId === user.id;
  const isSubmitted = version.state === "submitted";
  const decideBlocker = !isSubmitted
    ? `This version is ${version.state}; only a submitted version can be approved or rejected.`
    : isAuthor
      ? "You wrote this version. Someone else must approve or reject it."
      : null;
  const approveBlocker = decideBlocker ?? (violations.length > 0 ? "It exceeds the site ceilings listed above, so it cannot be approved." : null);

  return (
    <>
      <title>{`Review ${label} · Jogwright`}</title>
      <Link to="/reviews" className="mb-3 inline-flex items-center gap-1 text-sm font-semibold text-iris-300 hover:underline">
        <ArrowLeft aria-hidden className="size-4" /> Review queue
      </Link>
      <PageHeader
        title={`Review: ${profile.name}`}
        description={
          <span className="flex flex-wrap items-center gap-x-4 gap-y-1 text-sm">
            <VersionLabel version={version} />
            <ProfileFacts profile={profile} />
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
            <div className="flex flex-wrap gap-2">
              <Button variant="primary" disabled={approveBlocker !== null} title={approveBlocker ?? undefined} onClick={() => setDecision("approve")}>
                <Check aria-hidden className="size-4" /> Approve…
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
        onClose={() => setDecision(null)}
        onDone={(d, v: ProfileVersion) => {
          setDecision(null);
          setNotice(`${profile.name} v${v.number} is ${DONE[d]}.`);
        }}
      />
    </>
  );
}
