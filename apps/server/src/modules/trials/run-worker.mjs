// The trial pool's worker entry (plain JavaScript: Piscina imports it). It loads the TypeScript job through
// tsx's scoped loader, as the jog simulation thread does (modules/jog/sim-thread.ts explains why).
//
// A result goes back copied (structured clone), never moved: transferring a buffer detaches it in this
// thread, and the first detach invalidates V8's ArrayBufferDetaching protector for the thread for good, after
// which its optimised code checks every typed-array access for a detached buffer. Measured (3 Dec 2026,
// --trace-protector-invalidation shows the invalidation): a 10-s trial at 1 kHz took 21.1–21.8 ms in a
// thread that had moved a result (or had only imported Piscina's main module: the trace then shows one invalidation more), 18.5–19.7 ms
// in one that never did. The server asks for the series encoded (run-job.ts, output "stored": ~1.6 MB copied
// instead of 3.9 MB of channels).
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
