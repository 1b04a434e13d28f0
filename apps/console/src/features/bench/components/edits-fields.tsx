import { SWEEP_PARAMETERS, sweepParameterOf, type ProfileParams, type SweepParameter } from "@jogwright/shared";
import { NumberField } from "../../../components/ui/number-field.tsx";
import { display } from "../units.ts";

const PARAMETERS = Object.keys(SWEEP_PARAMETERS) as SweepParameter[];

/**
 * Unsaved edits of a version for a comparison on the bench: the parameters a sweep may vary, in display
 * units, prefilled from the version. Nothing is saved; the runs carry the edited parameters.
 */
export function EditsFields({ params, edits, onChange, isValid }: {
  params: ProfileParams; edits: Partial<Record<SweepParameter, number>>; onChange: (e: Partial<Record<SweepParameter, number>>) => void; isValid: boolean;
}) {
  return (
    <fieldset className="mt-4 flex flex-col gap-2">
      <legend className="mb-1 text-sm font-semibold text-ink-100">Unsaved edits (the rest as in the version)</legend>
      <div className="grid gap-3 md:grid-cols-4">
        {PARAMETERS.map((p) => {
          const si = edits[p] ?? sweepParameterOf(params, p);
          if (si === null) return null; // not in this profile's damping scheme
          const d = display(SWEEP_PARAMETERS[p].unit);
          return (
            <NumberField
              key={p}
              label={SWEEP_PARAMETERS[p].label}
              unit={d.unit}
              step="any"
              value={+(si * d.factor).toPrecision(6)}
              onChange={(e) => onChange({ ...edits, [p]: e.target.valueAsNumber / d.factor })}
            />
          );
        })}
      </div>
      {!isValid ? <p className="text-sm text-stop-400">These values are not a valid profile (a value out of range, or σ stop above ε).</p> : null}
    </fieldset>
  );
}
