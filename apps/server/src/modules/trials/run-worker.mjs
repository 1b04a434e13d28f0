// The trial pool's worker entry (plain JavaScript: Piscina imports it). It loads the TypeScript job through
// tsx's scoped loader, as the jog simulation thread does (modules/jog/sim-thread.ts explains why).
import { tsImport } from "tsx/esm/api";

const job = await tsImport("./run-job.ts", import.meta.url);
const maps = await tsImport("./map-job.ts", import.meta.url);

export default function run(input) {
  return job.runJob(input);
}

/** Piscina's named task `map`: a singularity map. */
export function map(input) {
  return maps.mapJob(input);
}
