import { useState } from "react";
import { label as labelOf, type JointKind, type ProfileVersion } from "@jogwright/shared";
import { Checkbox } from "../../../components/ui/checkbox.tsx";
import { Options, SelectField } from "../../../components/ui/select-field.tsx";
import { ParamsDiffTable } from "../../../components/profiles/params-table.tsx";

export interface ComparePair {
  fromId: number;
  toId: number;
}

const label = (v: ProfileVersion) => `v${v.number} (${labelOf("versionState", v.state).toLowerCase()})`;

/** Pick any two versions; their parameters side by side, field by field, with units. */
export function CompareVersions({ versions, pair, onPairChange, jointKinds }: {
  versions: ProfileVersion[];
  pair: ComparePair;
  onPairChange: (pair: ComparePair) => void;
  jointKinds?: readonly JointKind[];
}) {
  const [isOnlyChanged, setOnlyChanged] = useState(false);
  const from = versions.find((v) => v.id === pair.fromId);
  const to = versions.find((v) => v.id === pair.toId);
  return (
    <div className="flex flex-col gap-4">
      <div className="flex flex-wrap items-end gap-4">
        <SelectField label="From version" value={pair.fromId} onChange={(e) => onPairChange({ ...pair, fromId: Number(e.target.value) })} className="w-56">
          <Options items={versions} valueFor={(v) => v.id} labelOf={label} />
        </SelectField>
        <SelectField label="To version" value={pair.toId} onChange={(e) => onPairChange({ ...pair, toId: Number(e.target.value) })} className="w-56">
          <Options items={versions} valueFor={(v) => v.id} labelOf={label} />
        </SelectField>
        <div className="pb-2">
          <Checkbox label="Only changed parameters" checked={isOnlyChanged} onChange={(e) => setOnlyChanged(e.target.checked)} />
        </div>
      </div>
      {from && to ? (
        <ParamsDiffTable
          before={from.params}
          after={to.params}
          beforeLabel={`v${from.number}`}
          afterLabel={`v${to.number}`}
          jointKinds={jointKinds}
          onlyChanged={isOnlyChanged}
        />
      ) : (
        <p className="text-sm text-ink-400">Pick two versions.</p>
      )}
    </div>
  );
}
