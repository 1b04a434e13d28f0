import { Piscina } from "piscina";
import { encodeChunk, type EncodedChunk } from "./chunk-codec.ts";
import type { FrameBatch } from "./frame-log.ts";

/**
 * Encodes recording chunks (chunk-codec.ts: JSON parse, columns, deflate) on a thread of their own, not on
 * the main thread, whose turns carry every live session's inputs and state frames. Measured with 50 live
 * sessions (DEVELOPERS.md, "Load benchmark"): encoding was a quarter of the main thread's time, in blocks of
 * about 5 ms per chunk, each one a delay for every frame and input queued behind it.
 *
 * One thread, made on the first chunk. If it cannot start or fails, the error is logged once and chunks
 * are encoded on the calling thread from then on: a recording is never lost to the thread.
 */
export class ChunkEncoderThread {
  private pool: Piscina | null = null;
  private hasFailed = false;
  /** Chunks encoded on the thread so far (the rest, after a failure, on the calling thread). */
  encodedOnThread = 0;

  /** `workerFile`: the thread's entry (tests name one that cannot start). */
  constructor(private readonly workerFile: URL = new URL("./encode-worker.mjs", import.meta.url)) {}

  /** A batch's bytes cross to the thread as one copy (a structured clone of a Uint8Array). */
  async encode(frames: readonly string[] | FrameBatch): Promise<EncodedChunk> {
    if (!this.hasFailed) {
      try {
        this.pool ??= new Piscina({
          filename: this.workerFile.href,
          minThreads: 1,
          maxThreads: 1,
          idleTimeout: Infinity,
          name: "default",
        });
        const r = (await this.pool.run(frames)) as { encoding: EncodedChunk["encoding"]; data: Uint8Array };
        this.encodedOnThread++;
        // A Buffer crosses threads as a plain Uint8Array: the same bytes, viewed as a Buffer again.
        return { encoding: r.encoding, data: Buffer.from(r.data.buffer, r.data.byteOffset, r.data.byteLength) };
      } catch (error) {
        this.hasFailed = true;
        console.error("[jogwright] the recording encoder thread failed; encoding on the main thread from now on:", (error as Error).message);
        void this.close();
      }
    }
    return encodeChunk(frames);
  }

  async close(): Promise<void> {
    const pool = this.pool;
    this.pool = null;
    await pool?.destroy();
  }
}
