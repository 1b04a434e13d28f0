import { UNITS } from "@jogwright/shared";

// The bench's SI values in the console's display units: the shared conversions the profile form uses
// (lengths in mm, angles in deg), looked up by the SI unit a sweep parameter or objective names.

const BY_SI_UNIT = new Map(Object.values(UNITS).filter((c) => c.siUnit !== c.uiUnit).map((c) => [c.siUnit, c]));

/** The factor from SI to the display unit, and the display unit. A unit without a conversion shows as it is. */
export function display(siUnit: string): { factor: number; unit: string } {
  const c = BY_SI_UNIT.get(siUnit);
  return c ? { factor: c.toUi(1), unit: c.uiUnit } : { factor: 1, unit: siUnit || "—" };
}

/** A value in display units, to 3 significant digits, with its unit. */
export const shown = (value: number, siUnit: string) => `${(value * display(siUnit).factor).toPrecision(3)} ${display(siUnit).unit}`;
