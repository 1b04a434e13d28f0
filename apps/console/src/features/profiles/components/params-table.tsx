import { Fragment } from "react";
import {
  diffProfileParams,
  labelForProfilePath,
  profileWarnings,
  type DiffValue,
  type JointKind,
  type ProfileParamDiffRow,
  type ProfileParams,
} from "@jogwright/shared";
import { Badge } from "../../../components/ui/badge.tsx";
import { Message } from "../../../components/ui/message.tsx";
import { cn } from "../../../lib/cn.ts";

export function formatDiffValue(value: DiffValue): string {
  if (value === null) return "—";
  if (typeof value === "boolean") return value ? "On" : "Off";
  return String(value);
}

function groupRows(rows: ProfileParamDiffRow[]): [string, ProfileParamDiffRow[]][] {
  const groups = new Map<string, ProfileParamDiffRow[]>();
  for (const row of rows) groups.set(row.group, [...(groups.get(row.group) ?? []), row]);
  return [...groups];
}

const Unit = ({ unit }: { unit: string }) => (unit === "—" ? null : <span className="num ml-1 text-xs text-ink-400">{unit}</span>);

/**
 * The shared profileWarnings of a parameter set: settings that are allowed but worth a second look (not
 * refusals; a version with warnings may be submitted and approved). Nothing when there are none.
 */
export function ParamsWarnings({ params }: { params: ProfileParams }) {
  const warnings = profileWarnings(params);
  if (warnings.length === 0) return null;
  return (
    <Message tone="warn" title={warnings.length === 1 ? "Worth a second look" : `${warnings.length} settings worth a second look`}>
      <ul className="list-disc pl-4" data-testid="profile-warnings">
        {warnings.map((w) => (
          <li key={w.field}>
            <span className="font-semibold">{labelForProfilePath(w.field)}:</span> {w.message}.
          </li>
        ))}
      </ul>
      <p className="mt-1">A warning, not a refusal: the version can still be submitted and approved.</p>
    </Message>
  );
}

/** Every parameter of one version, grouped as in the form, values in UI units, with its warnings. */
export function ParamsTable({ params, jointKinds, caption }: { params: ProfileParams; jointKinds?: readonly JointKind[]; caption: string }) {
  const rows = diffProfileParams(params, params, jointKinds);
  return (
    <div className="flex flex-col gap-2">
      <ParamsWarnings params={params} />
      <div className="overflow-x-auto rounded-lg border border-ink-700">
        <table className="w-full border-collapse text-left text-sm">
          <caption className="sr-only">{caption}</caption>
          <tbody>
            {groupRows(rows).map(([group, items]) => (
              <Fragment key={group}>
                <tr className="bg-ink-800">
                  <th colSpan={2} scope="colgroup" className="border-b border-ink-700 px-3 py-1.5 text-xs font-semibold text-ink-300">
                    {group}
                  </th>
                </tr>
                {items.map((row) => (
                  <tr key={row.field} className="border-b border-ink-700 last:border-b-0">
                    <th scope="row" className="px-3 py-1.5 font-normal text-ink-300">
                      {row.label}
                    </th>
                    <td className="px-3 py-1.5 text-right">
                      <span className="num text-ink-100">{formatDiffValue(row.after)}</span>
                      <Unit unit={row.uiUnit} />
                    </td>
                  </tr>
                ))}
              </Fragment>
            ))}
          </tbody>
        </table>
      </div>
    </div>
  );
}

/**
 * Two parameter sets side by side, field by field, in UI units; changed rows are marked (accent fill and
 * a "Changed" badge, so the mark does not rest on colour alone).
 */
export function ParamsDiffTable({
  before,
  after,
  beforeLabel,
  afterLabel,
  jointKinds,
  onlyChanged = false,
}: {
  before: ProfileParams;
  after: ProfileParams;
  beforeLabel: string;
  afterLabel: string;
  jointKinds?: readonly JointKind[];
  onlyChanged?: boolean;
}) {
  const all = diffProfileParams(before, after, jointKinds);
  const changedCount = all.filter((r) => r.changed).length;
  const rows = onlyChanged ? all.filter((r) => r.changed) : all;
  return (
    <div className="flex flex-col gap-2">
      <p className="text-sm text-ink-300" data-testid="diff-summary">
        {changedCount === 0 ? "No parameter differs." : `${changedCount} ${changedCount === 1 ? "parameter differs" : "parameters differ"}.`}
      </p>
      <div className="overflow-x-auto rounded-lg border border-ink-700">
        <table className="w-full border-collapse text-left text-sm" data-testid="params-diff">
          <caption className="sr-only">
            Parameters of {beforeLabel} and {afterLabel}, field by field
          </caption>
          <thead className="bg-ink-800 text-ink-300">
            <tr>
              <th scope="col" className="border-b border-ink-700 px-3 py-2 font-semibold">
                Parameter
              </th>
              <th scope="col" className="border-b border-ink-700 px-3 py-2 text-right font-semibold">
                {beforeLabel}
              </th>
              <th scope="col" className="border-b border-ink-700 px-3 py-2 text-right font-semibold">
                {afterLabel}
              </th>
              <th scope="col" className="border-b border-ink-700 px-3 py-2 font-semibold">
                <span className="sr-only">Changed</span>
              </th>
            </tr>
          </thead>
          <tbody>
            {groupRows(rows).map(([group, items]) => (
              <Fragment key={group}>
                <tr className="bg-ink-900">
                  <th colSpan={4} scope="colgroup" className="border-b border-ink-700 px-3 py-1.5 text-xs font-semibold text-ink-300">
                    {group}
                  </th>
                </tr>
                {items.map((row) => (
                  <tr
                    key={row.field}
                    data-changed={row.changed ? "true" : undefined}
                    className={cn("border-b border-ink-700 last:border-b-0", row.changed ? "bg-iris-950" : undefined)}
                  >
                    <th scope="row" className={cn("px-3 py-1.5 text-left", row.changed ? "font-semibold text-ink-100" : "font-normal text-ink-300")}>
                      {row.label}
                    </th>
                    <td className="px-3 py-1.5 text-right whitespace-nowrap">
                      <span className={cn("num", row.changed ? "text-ink-300" : "text-ink-100")}>{formatDiffValue(row.before)}</span>
                      <Unit unit={row.uiUnit} />
                    </td>
                    <td className="px-3 py-1.5 text-right whitespace-nowrap">
                      <span className={cn("num", row.changed ? "font-semibold text-iris-300" : "text-ink-100")}>{formatDiffValue(row.after)}</span>
                      <Unit unit={row.uiUnit} />
                    </td>
                    <td className="px-3 py-1.5">{row.changed ? <Badge tone="accent">Changed</Badge> : null}</td>
                  </tr>
                ))}
              </Fragment>
            ))}
          </tbody>
        </table>
      </div>
    </div>
  );
}
