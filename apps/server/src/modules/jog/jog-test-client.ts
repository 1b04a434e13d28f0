import { performance } from "node:perf_hooks";
import WebSocket from "ws";
import { jogServerMessageSchema, type JogServerMessage, type JogState } from "@jogwright/shared";

/**
 * A real `ws` client for the protocol tests and the load benchmark: keeps every server message (each
 * checked with the shared schema) and can stream input frames at a fixed rate like the drive page does.
 */
export interface InputState {
  enabling: boolean;
  mode: "cartesian" | "joint";
  frame: "world" | "tool";
  axes: number[];
  overridePercent: number;
}

/** How a state frame's text names its last input (sim-worker.ts frameText writes it last). */
const LAST_INPUT_SEQ_KEY = '"lastInputSeq":';

export class JogTestClient {
  readonly messages: { at: number; msg: JogServerMessage }[] = [];
  readonly invalid: unknown[] = [];
  seq = 0;
  input: InputState = { enabling: false, mode: "cartesian", frame: "world", axes: [0, 0, 0, 0, 0, 0], overridePercent: 40 };
  private streamTimer: NodeJS.Timeout | null = null;
  private waiters: { pred: (m: JogServerMessage) => boolean; resolve: (m: JogServerMessage) => void }[] = [];
  /** Send times of input seqs (client clock, ms). */
  readonly sentAt = new Map<number, number>();

  /**
   * Lean mode (the load benchmark): a state frame is neither parsed nor checked nor kept; only its
   * lastInputSeq (the frame's last fields, as the server writes them) goes to onStateSeq. Parsing and
   * checking every frame of 50 sessions took a third of a core in the client process, CPU the server then
   * lacked on the 2-core machine and queueing that counted as latency.
   */
  onStateSeq: ((lastInputSeq: number, at: number) => void) | null = null;

  private constructor(readonly ws: WebSocket) {
    ws.on("message", (data) => {
      const at = performance.now();
      if (this.onStateSeq) {
        const text = data.toString();
        if (text.startsWith('{"type":"state"')) {
          const i = text.lastIndexOf(LAST_INPUT_SEQ_KEY);
          this.onStateSeq(i < 0 ? -1 : Number.parseInt(text.slice(i + LAST_INPUT_SEQ_KEY.length), 10), at);
          return;
        }
      }
      let raw: unknown;
      try {
        raw = JSON.parse(data.toString());
      } catch {
        this.invalid.push(data.toString());
        return;
      }
      const parsed = jogServerMessageSchema.safeParse(raw);
      if (!parsed.success) {
        this.invalid.push(raw);
        return;
      }
      this.onMessage?.(parsed.data, at);
      this.messages.push({ at, msg: parsed.data });
      this.waiters = this.waiters.filter((w) => {
        if (!w.pred(parsed.data)) return true;
        w.resolve(parsed.data);
        return false;
      });
    });
  }

  onMessage: ((msg: JogServerMessage, at: number) => void) | null = null;

  static connect(url: string, headers: Record<string, string>): Promise<JogTestClient> {
    return new Promise((resolve, reject) => {
      const ws = new WebSocket(url, { headers, perMessageDeflate: false });
      const client = new JogTestClient(ws);
      ws.once("open", () => resolve(client));
      ws.once("unexpected-response", (_req, res) => reject(Object.assign(new Error(`upgrade refused: ${res.statusCode}`), { status: res.statusCode })));
      ws.once("error", reject);
    });
  }

  send(message: unknown): void {
    this.ws.send(typeof message === "string" ? message : JSON.stringify(message));
  }

  sendInput(): number {
    const seq = this.seq++;
    const now = performance.now();
    this.sentAt.set(seq, now);
    this.send({ type: "input", seq, clientTimeMs: now, ...this.input });
    return seq;
  }

  /** Sends the current input state every periodMs (the drive page streams at 60–120 Hz). */
  stream(periodMs: number): void {
    this.stopStream();
    this.sendInput();
    this.streamTimer = setInterval(() => this.sendInput(), periodMs);
  }

  stopStream(): void {
    if (this.streamTimer) clearInterval(this.streamTimer);
    this.streamTimer = null;
  }

  /** Resolves with the first message (from now on) matching pred; rejects after timeoutMs. */
  next<T extends JogServerMessage>(pred: (m: JogServerMessage) => m is T, timeoutMs?: number): Promise<T>;
  next(pred: (m: JogServerMessage) => boolean, timeoutMs?: number): Promise<JogServerMessage>;
  next(pred: (m: JogServerMessage) => boolean, timeoutMs = 3000): Promise<JogServerMessage> {
    return new Promise((resolve, reject) => {
      const waiter = { pred, resolve: (m: JogServerMessage) => { clearTimeout(timer); resolve(m); } };
      const timer = setTimeout(() => {
        this.waiters = this.waiters.filter((w) => w !== waiter);
        reject(new Error(`no matching message within ${timeoutMs} ms`));
      }, timeoutMs);
      this.waiters.push(waiter);
    });
  }

  nextState(pred: (s: JogState) => boolean = () => true, timeoutMs = 3000): Promise<JogState> {
    return this.next((m): m is JogState => m.type === "state" && pred(m), timeoutMs);
  }

  /** The state frames received since index `from` of messages. */
  statesSince(from: number): { at: number; state: JogState }[] {
    return this.messages.slice(from).flatMap((m) => (m.msg.type === "state" ? [{ at: m.at, state: m.msg }] : []));
  }

  close(): Promise<void> {
    this.stopStream();
    if (this.ws.readyState === WebSocket.CLOSED) return Promise.resolve();
    return new Promise((resolve) => {
      this.ws.once("close", () => resolve());
      this.ws.close();
    });
  }
}

export const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

/**
 * What an upgrade ends in: the close code and reason of a socket the server completed and closed (no
 * message expected), or the HTTP status of a refused upgrade.
 */
export function upgradeOutcome(url: string, headers: Record<string, string>): Promise<{ code?: number; reason?: string; httpStatus?: number; messages: number }> {
  return new Promise((resolve, reject) => {
    const ws = new WebSocket(url, { headers, perMessageDeflate: false });
    let messages = 0;
    ws.on("message", () => messages++);
    ws.once("close", (code, reason) => resolve({ code, reason: reason.toString(), messages }));
    ws.once("unexpected-response", (_req, res) => {
      resolve({ httpStatus: res.statusCode, messages });
      ws.terminate();
    });
    ws.once("error", (error) => reject(error));
  });
}
