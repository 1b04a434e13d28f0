import type { ArmDetail } from "@jogwright/shared";
import { SelectField } from "../../../components/ui/select-field.tsx";
import { formatFixed } from "../../../lib/format.ts";
import { defaultToolOn, pickableTools } from "../forms/arm-choice.ts";
import type { ArmChoice } from "../../../lib/version-arm.ts";

/** A TCP position in mm, e.g. "(0, 0, 160) mm". */
const toolText = (positionM: readonly number[]) => `(${positionM.map((m) => formatFixed(m * 1000, 1)).join(", ")}) mm`;

/**
 * The arm revision and tool pickers of the new-profile and new-version forms (issue 12): two selects, laid
 * out by the caller's grid. Picking a revision picks `base`'s tool on `base`'s own revision, else that
 * revision's first tool in service; a retired tool is offered only as the one `base` already names.
 */
export function ArmRevisionFields({
  detail,
  value,
  base,
  onChange,
  revisionHint,
  disabled,
}: {
  /** The arm with its revisions (newest first); undefined while loading. */
  detail: ArmDetail | undefined;
  value: ArmChoice | null;
  /** The choice the form starts from (the base version's); null for a new profile. */
  base: ArmChoice | null;
  onChange: (choice: ArmChoice) => void;
  revisionHint: string;
  disabled?: boolean;
}) {
  const revisions = detail?.revisions ?? [];
  const revision = revisions.find((r) => r.id === value?.revisionId);
  const tools = pickableTools(revision, base);
  const tool = tools.find((t) => t.id === value?.toolId);
  return (
    <>
      <SelectField
        label="Arm revision"
        value={revision?.id ?? ""}
        disabled={disabled || !revision}
        onChange={(e) => {
          const next = revisions.find((r) => r.id === Number(e.target.value));
          if (next) onChange({ revisionId: next.id, toolId: defaultToolOn(next, base) });
        }}
        hint={revisionHint}
      >
        {revision ? null : <option value="">Loading revisions…</option>}
        {revisions.map((r) => (
          <option key={r.id} value={r.id}>
            Revision {r.revision}
            {r.id === detail?.arm.latestRevisionId ? " (current)" : ""}
            {r.note ? ` — ${r.note}` : ""}
          </option>
        ))}
      </SelectField>
      <SelectField
        label="Tool"
        value={tool?.id ?? ""}
        disabled={disabled || tools.length === 0}
        onChange={(e) => revision && onChange({ revisionId: revision.id, toolId: e.target.value === "" ? null : Number(e.target.value) })}
        hint={
          tool
            ? `TCP ${toolText(tool.positionM)} from the flange, ${tool.massKg} kg.${tool.retiredAt ? " Retired: kept by the version this starts from, offered to no other." : ""}`
            : tools.length === 0
              ? "No tool in service on this revision: the model's own tool transform is used."
              : "No tool record: the model's own tool transform is used."
        }
      >
        {tool ? null : <option value="">No tool</option>}
        {tools.map((t) => (
          <option key={t.id} value={t.id}>
            {t.name}
            {t.retiredAt ? " (retired)" : ""}
          </option>
        ))}
      </SelectField>
    </>
  );
}
