/** Conversions at the UI edge. Everything stored and computed is SI (m, rad, s). */
export const DEG_PER_RAD = 180 / Math.PI;
export const radToDeg = (rad: number): number => rad * DEG_PER_RAD;
export const mToMm = (m: number): number => m * 1000;
