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
 * for this run (runner.ts, trim), so the buffers are transferred. A copy (3.9 MB for a 10-s trial at 1 kHz)
 * would be read on the receiving side: the server's main thread, which also carries the live jog sockets.
 * Measured with bench/tuning-bench.ts, copy and move interleaved: request to result 21.1–36.8 ms copied,
 * 21.9–29.4 ms moved (better in 2 of 3 pairs); the worker's own time is ~1.5 ms longer moved (19.1–20.5
 * against 21.2–21.6 ms), as the buffers it handed over are not there to be reused.
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
