// The bench's SI values in the console's display units.

/** SI → the console's display units (lengths in mm, angles in deg), as the profile form shows them. */
export const DISPLAY: Record<string, { factor: number; unit: string }> = {
  m: { factor: 1000, unit: "mm" },
  "m/s": { factor: 1000, unit: "mm/s" },
  "m/s²": { factor: 1000, unit: "mm/s²" },
  "rad/s²": { factor: 180 / Math.PI, unit: "deg/s²" },
};
export const display = (siUnit: string) => DISPLAY[siUnit] ?? { factor: 1, unit: siUnit || "—" };
/** A value in display units, to 3 significant digits, with its unit. */
export const shown = (value: number, siUnit: string) => `${(value * display(siUnit).factor).toPrecision(3)} ${display(siUnit).unit}`;

