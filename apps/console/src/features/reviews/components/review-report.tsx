import { Link } from "react-router";
import { ArrowLeft, Printer } from "lucide-react";
import { label as labelOf, labelForProfilePath } from "@jogwright/shared";
import { EvidenceTable } from "../../../components/bench/evidence-table.tsx";
import { CAUTION_TEXT } from "../../../components/layout/cautions-banner.tsx";
import { ParamsDiffTable, ParamsTable } from "../../../components/profiles/params-table.tsx";
import { Button } from "../../../components/ui/button.tsx";
import { QueryStatus } from "../../../components/ui/query-status.tsx";
import { jointKindsOf } from "../../../lib/arm-joints.ts";
import { formatDateTime } from "../../../lib/format.ts";
import { useArms } from "../../../lib/queries/arms.ts";
import { useVersionDetail } from "../../../lib/queries/profiles.ts";
import { DocumentTitle } from "../../../components/layout/document-title.tsx";

/**
 * The review report: one page to print or save as PDF from the browser (File → Print). What was reviewed
 * (profile, version, SHA-256 of its parameters), the decision, the ceiling check, the difference to the
 * approved version, every parameter and the trial evidence, with the product's cautions. The print style
 * (styles/index.css, `.report`) drops the console's frame and prints dark on white.
 */
export function ReviewReport({ versionId }: { versionId: number }) {
  const detail = useVersionDetail(versionId);
  const arms = useArms();
  if (!detail.data) return <QueryStatus query={detail} loading="Loading the version…" failed="Could not load the version" />;
  const { version, profile, violations, approvedVersion, approval, evidence } = detail.data;
  const jointKinds = jointKindsOf(arms.data?.find((a) => a.id === profile.armId));
  const label = `${profile.name} v${version.number}`;
  const facts: [string, string][] = [
    ["Operator", profile.operatorName],
    ["Arm", profile.armName],
    ["Version", `v${version.number}, ${labelOf("versionState", version.state).toLowerCase()}`],
    ["Author", version.authorName],
    ["Submitted", version.submittedAt ? `${formatDateTime(version.submittedAt)} UTC` : "not submitted"],
    ["Decision", approval ? `approved by ${approval.approverName}, ${formatDateTime(approval.approvedAt)} UTC: “${approval.comment}”` : version.decidedByName ? `${labelOf("versionState", version.state)} by ${version.decidedByName}${version.decisionComment ? `: “${version.decisionComment}”` : ""}` : "none yet"],
    ["Parameters SHA-256", version.paramsSha256],
    ["Printed", `${formatDateTime(new Date().toISOString())} UTC`],
  ];
  return (
    <article className="report mx-auto flex max-w-5xl flex-col gap-6" data-testid="review-report">
      <DocumentTitle page={`Report ${label}`} />
      <div className="flex items-center justify-between print:hidden">
        <Link to={`/reviews/${version.id}`} className="inline-flex items-center gap-1 text-sm font-semibold text-iris-300 hover:underline">
          <ArrowLeft aria-hidden className="size-4" /> Back to the review
        </Link>
        <Button variant="primary" onClick={() => window.print()}>
          <Printer aria-hidden className="size-4" /> Print or save as PDF
        </Button>
      </div>
      <header className="flex flex-col gap-2">
        <h1 className="text-2xl font-semibold">Review report: {label}</h1>
        <p className="rounded-md border border-warn-400/60 p-3 text-sm" role="note">
          {CAUTION_TEXT} An approval recorded here is not a safety sign-off.
        </p>
      </header>
      <dl className="grid grid-cols-[max-content_1fr] gap-x-6 gap-y-1 text-sm">
        {facts.map(([k, v]) => (
          <div key={k} className="contents">
            <dt className="font-semibold">{k}</dt>
            <dd className={k === "Parameters SHA-256" ? "num break-all" : undefined}>{v}</dd>
          </div>
        ))}
      </dl>
      {version.note ? (
        <section>
          <h2 className="mb-1 text-lg font-semibold">Author's note</h2>
          <p className="text-sm">{version.note}</p>
        </section>
      ) : null}
      <section>
        <h2 className="mb-1 text-lg font-semibold">Ceiling check (the ceilings in force when printed)</h2>
        {violations.length === 0 ? (
          <p className="text-sm">Within every site ceiling.</p>
        ) : (
          <ul className="list-disc pl-5 text-sm">
            {violations.map((v) => (
              <li key={v.field}>
                {labelForProfilePath(v.field)}: {v.message}
              </li>
            ))}
          </ul>
        )}
      </section>
      <section className="break-inside-avoid">
        <h2 className="mb-2 text-lg font-semibold">Trial evidence</h2>
        {evidence.length ? <EvidenceTable runs={evidence} caption={`The runs ${label} was submitted with`} /> : <p className="text-sm">No runs attached.</p>}
      </section>
      <section>
        <h2 className="mb-2 text-lg font-semibold">{approvedVersion && approvedVersion.id !== version.id ? `Difference to the approved v${approvedVersion.number}` : "Difference to the approved version"}</h2>
        {approvedVersion && approvedVersion.id !== version.id ? (
          <ParamsDiffTable before={approvedVersion.params} after={version.params} beforeLabel={`v${approvedVersion.number} (approved)`} afterLabel={`v${version.number}`} jointKinds={jointKinds} />
        ) : (
          <p className="text-sm">{approvedVersion ? "This is the approved version." : "No version of this profile was approved before."}</p>
        )}
      </section>
      <section>
        <h2 className="mb-2 text-lg font-semibold">Parameters</h2>
        <ParamsTable params={version.params} jointKinds={jointKinds} caption={`Parameters of ${label}`} />
      </section>
    </article>
  );
}
