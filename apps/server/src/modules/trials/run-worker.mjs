// The trial pool's worker entry (plain JavaScript: Piscina imports it). It loads the TypeScript job through
// tsx's scoped loader, as the jog simulation thread does (modules/jog/sim-thread.ts explains why).
import { Piscina } from "piscina";
import { tsImport } from "tsx/esm/api";

const job = await tsImport("./run-job.ts", import.meta.url);
const maps = await tsImport("./map-job.ts", import.meta.url);

export default function run(input) {
  return moveSeries(job.runJob(input));
}

/**
 * A run's series goes back to the caller moved, not copied: each of its typed arrays owns a buffer made
 * for this run (runner.ts, trim), so the buffers are transferred. Copying them cost ~10 ms for a 10-s trial
 * at 1 kHz (3.9 MB: 29–32 ms a run with the copy against 19–20 without, measured with bench/tuning-bench.ts).
 */
function moveSeries(result) {
  if (!result.series) return result;
  const buffers = new Set();
  for (const value of Object.values(result.series)) {
    if (ArrayBuffer.isView(value) && value.byteOffset === 0 && value.byteLength === value.buffer.byteLength) buffers.add(value.buffer);
  }
  return Piscina.move({
    get [Piscina.transferableSymbol]() {
      return [...buffers];
    },
    get [Piscina.valueSymbol]() {
      return result;
    },
  });
}

/** Piscina's named task `map`: a singularity map. */
export function map(input) {
  return maps.mapJob(input);
}
