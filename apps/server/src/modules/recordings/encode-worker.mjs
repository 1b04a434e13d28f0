// The recording encoder's worker entry (plain JavaScript: Piscina imports it). It loads the TypeScript codec
// through tsx's scoped loader, as the trial pool and the jog simulation thread do (jog/sim-thread.ts says why).
import { tsImport } from "tsx/esm/api";

const codec = await tsImport("./chunk-codec.ts", import.meta.url);

/** One chunk's frames (JSON object texts) as stored: chunk-codec.ts encodeChunk. */
export default function encode(frameTexts) {
  return codec.encodeChunk(frameTexts);
}
