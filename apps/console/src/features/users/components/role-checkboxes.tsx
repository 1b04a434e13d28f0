import type { UseFormRegisterReturn } from "react-hook-form";
import { ROLES, ROLE_LABELS } from "@jogwright/shared";
import { Checkbox } from "../../../components/ui/checkbox.tsx";

/** The four role checkboxes as one group; register("roles") gives react-hook-form an array of roles. */
export function RoleCheckboxes({ registration, error }: { registration: UseFormRegisterReturn<"roles">; error?: string | undefined }) {
  return (
    <fieldset className="flex flex-col gap-2" aria-invalid={error ? true : undefined}>
      <legend className="mb-1.5 text-sm font-semibold">Roles</legend>
      <div className="grid grid-cols-2 gap-2">
        {ROLES.map((role) => (
          <Checkbox key={role} label={ROLE_LABELS[role]} value={role} {...registration} />
        ))}
      </div>
      {error ? <p className="text-sm text-stop-400">{error}</p> : null}
    </fieldset>
  );
}
