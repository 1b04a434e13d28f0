import { Link } from "react-router";
import { Download, Gamepad2, GitCompareArrows, Send, Undo2 } from "lucide-react";
import { isDriveable, type ProfileVersion, type User } from "@jogwright/shared";
import { Button } from "../../../components/ui/button.tsx";
import { cn } from "../../../lib/cn.ts";
import { TableFrame, TableHead } from "../../../components/ui/table-frame.tsx";
import { formatDateTime } from "../../../lib/format.ts";
import { FlaggedBadge, shortHash, VersionStateBadge } from "../../../components/profiles/version-state-badge.tsx";
import { movesArm, versionArmText } from "../../../lib/version-arm.ts";
import { versionExportPath } from "../forms/version-file.ts";

interface VersionHistoryTableProps {
  versions: ProfileVersion[];
  /** Why a draft cannot be submitted (e.g. above a ceiling), by version id; absent = it can. */
  submitBlockers: Map<number, string>;
  canSubmit: boolean;
  canReview: boolean;
  isSubmitting: boolean;
  onSubmit: (version: ProfileVersion) => void;
  onCompare: (version: ProfileVersion) => void;
  /** Who looks, and the profile's operator: the driving rule decides who sees the test-drive link. */
  user: Pick<User, "id" | "roles">;
  operatorId: string;
  /** The author withdraws a submission (a dialog asks for a note). */
  onWithdraw: (version: ProfileVersion) => void;
  /** The version just imported: its row is marked (issue 12); null for none. */
  selectedVersionId?: number | null;
}

export function VersionHistoryTable({ versions, submitBlockers, canSubmit, canReview, isSubmitting, onSubmit, onCompare, user, operatorId, onWithdraw, selectedVersionId = null }: VersionHistoryTableProps) {
  return (
    <TableFrame testId="version-history" caption="Version history, newest first">
      <TableHead headings={["Version", "State", "Arm", "Author", "Created", "Note", "Hash", "Decision"]} hasActions />
      <tbody>
        {versions.map((v) => {
          const blocker = submitBlockers.get(v.id);
          const parent = versions.find((p) => p.id === v.parentVersionId);
          // The shared driving rule: an engineer test-drives any version but a retired one, an operator their approved one.
          const drive = isDriveable({ state: v.state, exceedsCeilings: v.exceedsCeilings, operatorId }, user);
          const isOwnDrive = drive.isDriveable && drive.kind === "approved" && user.id === operatorId;
          const isSelected = v.id === selectedVersionId;
          return (
            <tr
              key={v.id}
              className={cn("border-b border-ink-700 align-top last:border-b-0 hover:bg-ink-850", isSelected && "bg-iris-400/10 shadow-[inset_3px_0_0_var(--color-iris-400)] hover:bg-iris-400/10")}
              data-version={v.number}
              data-selected={isSelected || undefined}
            >
              <th scope="row" className="num px-3 py-2 font-semibold text-ink-100">
                v{v.number}
              </th>
              <td className="px-3 py-2">
                <span className="flex flex-wrap gap-1">
                  <VersionStateBadge state={v.state} />
                  <FlaggedBadge version={v} />
                </span>
              </td>
              <td className="px-3 py-2" data-testid="version-arm" title={versionArmText(v) ?? undefined}>
                {v.armRevision == null ? (
                  <span className="text-ink-400">—</span>
                ) : (
                  <>
                    <span className="whitespace-nowrap">Revision {v.armRevision}</span>{" "}
                    {/* Long tool names wrap (the table fits 1440 px instead of scrolling sideways). */}
                    <span className="block max-w-40 text-xs break-words text-ink-300">{v.toolName ?? "the model's own tool"}</span>
                    {parent && movesArm(v, parent) ? (
                      <>
                        {" "}
                        <span className="block text-xs whitespace-nowrap text-ink-400">moved from v{parent.number}</span>
                      </>
                    ) : null}
                  </>
                )}
              </td>
              <td className="max-w-40 min-w-24 px-3 py-2 break-words">{v.authorName}</td>
              <td className="num px-3 py-2 whitespace-nowrap text-ink-300">{formatDateTime(v.createdAt)}</td>
              <td className="max-w-72 min-w-32 px-3 py-2 text-ink-300">{v.note || <span className="text-ink-400">—</span>}</td>
              <td className="px-3 py-2">
                <span className="num text-xs text-ink-300" title={v.paramsSha256}>
                  {shortHash(v.paramsSha256)}
                </span>
              </td>
              <td className="max-w-64 px-3 py-2 text-ink-300">
                {v.decidedByName ? (
                  <span className="flex flex-col">
                    <span>
                      {v.decidedByName}
                      {v.decidedAt ? <span className="num text-xs text-ink-400"> · {formatDateTime(v.decidedAt)}</span> : null}
                    </span>
                    {v.decisionComment ? <span className="text-xs">“{v.decisionComment}”</span> : null}
                  </span>
                ) : (
                  <span className="text-ink-400">—</span>
                )}
              </td>
              <td className="min-w-56 px-3 py-2">
                {/* Actions wrap as whole buttons, never inside one ("Submit for review" on one line). */}
                <span className="flex flex-wrap justify-end gap-1 [&>*]:whitespace-nowrap">
                  {canSubmit && v.state === "draft" ? (
                    <Button
                      size="sm"
                      variant="secondary"
                      disabled={isSubmitting || blocker !== undefined}
                      title={blocker}
                      onClick={() => onSubmit(v)}
                      aria-label={`Submit v${v.number} for review`}
                    >
                      <Send aria-hidden className="size-3.5" /> Submit for review
                    </Button>
                  ) : null}
                  {canSubmit && v.state === "submitted" && v.authorId === user.id ? (
                    <Button size="sm" variant="ghost" onClick={() => onWithdraw(v)} aria-label={`Withdraw v${v.number} from review`}>
                      <Undo2 aria-hidden className="size-3.5" /> Withdraw…
                    </Button>
                  ) : null}
                  {drive.isDriveable ? (
                    <Link
                      to={`/drive?version=${v.id}`}
                      className="inline-flex h-7 items-center gap-1 rounded-md px-2.5 text-xs font-semibold whitespace-nowrap text-iris-300 hover:underline"
                      aria-label={isOwnDrive ? `Drive v${v.number}` : `Test-drive v${v.number}`}
                    >
                      <Gamepad2 aria-hidden className="size-3.5" /> {isOwnDrive ? "Drive this version" : "Test-drive this version"}
                    </Link>
                  ) : null}
                  {canReview && (v.state === "submitted" || v.state === "approved") ? (
                    <Link
                      to={`/reviews/${v.id}`}
                      className="inline-flex h-7 items-center rounded-md px-2.5 text-xs font-semibold text-iris-300 hover:underline"
                      aria-label={v.state === "submitted" ? `Review v${v.number}` : v.exceedsCeilings ? `Open v${v.number} to re-confirm or retire it` : `Open v${v.number} to retire it`}
                    >
                      {v.state === "submitted" ? "Review" : v.exceedsCeilings ? "Re-confirm or retire…" : "Retire…"}
                    </Link>
                  ) : null}
                  <Button size="sm" variant="ghost" onClick={() => onCompare(v)} aria-label={`Compare v${v.number} with its parent`}>
                    <GitCompareArrows aria-hidden className="size-3.5" /> Compare
                  </Button>
                  {/* Everyone who sees the version may export it (the server: operators their own profiles'). */}
                  <a
                    href={versionExportPath(v.id)}
                    download
                    className="inline-flex h-7 items-center gap-1 rounded-md px-2.5 text-xs font-semibold text-iris-300 hover:underline"
                    aria-label={`Export v${v.number} as a version file (JSON)`}
                    title="Download this version as a JSON file: its arm revision and tool, parameters and SHA-256"
                  >
                    <Download aria-hidden className="size-3.5" /> Export
                  </a>
                </span>
              </td>
            </tr>
          );
        })}
      </tbody>
    </TableFrame>
  );
}
