import type { Redis } from "ioredis";
import type { JogSessionInfo, LiveSession } from "@jogwright/shared";
import type { Scale } from "./redis.ts";

/**
 * The live sessions of every instance of a scaled-out site, in the shared Redis (docs/scaling.md):
 * - a hash `jogwright:live` (session id → the instance that drives it, the list entry and the session
 *   facts a watcher is sent), written when a session starts and removed when it ends;
 * - a heartbeat key per instance (`jogwright:instance:<id>`, a few seconds to live, renewed): entries of an
 *   instance that stopped renewing (it crashed) are left out of every listing and removed;
 * - frames of a session watched from another instance, published on `jogwright:frames:<session id>`
 *   while that instance has watchers of it (it says so on the driving instance's control channel);
 * - a watcher's STOP on the driving instance's control channel `jogwright:control:<instance id>`, where
 *   the driving instance latches its driver's station exactly as for a watcher of its own.
 * The single-instance default never makes one of these (modules/jog/hub.ts works alone).
 */
export interface DirectoryEntry {
  instanceId: string;
  live: LiveSession;
  info: JogSessionInfo;
}

/** What another instance asks of this one about a session it drives. */
export type ControlMessage =
  | { t: "watch"; sessionId: string; watching: boolean; from: string }
  | { t: "estop"; sessionId: string; byUserId: string };

const LIVE = "jogwright:live";
const HEARTBEAT_MS = 2000;
const HEARTBEAT_TTL_S = 6;
const instanceKey = (id: string) => `jogwright:instance:${id}`;
const framesChannel = (sessionId: string) => `jogwright:frames:${sessionId}`;
const controlChannel = (instanceId: string) => `jogwright:control:${instanceId}`;

export class LiveDirectory {
  private readonly subscriber: Redis;
  private readonly heartbeat: NodeJS.Timeout;
  private readonly frameHandlers = new Map<string, Set<(text: string) => void>>();
  /** Sessions of this instance watched from others: session id → the instances watching it. */
  private readonly remoteWatchers = new Map<string, Set<string>>();
  private onControl: (msg: ControlMessage) => void = () => undefined;

  constructor(private readonly scale: Scale) {
    this.subscriber = scale.connection("live-directory");
    void this.beat();
    this.heartbeat = setInterval(() => void this.beat(), HEARTBEAT_MS);
    this.heartbeat.unref();
    this.subscriber.on("message", (channel: string, text: string) => this.onMessage(channel, text));
    void this.subscriber.subscribe(controlChannel(scale.instanceId)).catch((e: Error) => console.error(`[jogwright] live directory: ${e.message}`));
  }

  get instanceId(): string {
    return this.scale.instanceId;
  }

  /** What the hub does when another instance asks something of a session it drives. */
  handleControl(handler: (msg: ControlMessage) => void): void {
    this.onControl = handler;
  }

  private async beat(): Promise<void> {
    await this.scale.redis.set(instanceKey(this.instanceId), "1", "EX", HEARTBEAT_TTL_S).catch(() => undefined);
  }

  private onMessage(channel: string, text: string): void {
    if (channel === controlChannel(this.instanceId)) {
      let msg: ControlMessage;
      try {
        msg = JSON.parse(text) as ControlMessage;
      } catch {
        return;
      }
      if (msg.t === "watch") {
        const set = this.remoteWatchers.get(msg.sessionId) ?? new Set<string>();
        if (msg.watching) set.add(msg.from);
        else set.delete(msg.from);
        if (set.size) this.remoteWatchers.set(msg.sessionId, set);
        else this.remoteWatchers.delete(msg.sessionId);
      }
      this.onControl(msg);
      return;
    }
    const sessionId = channel.slice("jogwright:frames:".length);
    for (const handler of this.frameHandlers.get(sessionId) ?? []) handler(text);
  }

  /** A session of this instance went live: listed for every instance. */
  announce(live: LiveSession, info: JogSessionInfo): void {
    const entry: DirectoryEntry = { instanceId: this.instanceId, live, info };
    void this.scale.redis.hset(LIVE, live.sessionId, JSON.stringify(entry)).catch(() => undefined);
  }

  /** A session of this instance ended; its last frames (and `ended`) were already published. */
  withdraw(sessionId: string): void {
    this.remoteWatchers.delete(sessionId);
    void this.scale.redis.hdel(LIVE, sessionId).catch(() => undefined);
  }

  /** Every live session of the other instances that are alive. Entries of dead instances are removed. */
  async others(): Promise<DirectoryEntry[]> {
    const all = Object.values(await this.scale.redis.hgetall(LIVE)).map((t) => JSON.parse(t) as DirectoryEntry);
    const instances = [...new Set(all.map((e) => e.instanceId))].filter((id) => id !== this.instanceId);
    const alive = new Set<string>();
    if (instances.length) {
      const beats = await this.scale.redis.mget(instances.map(instanceKey));
      instances.forEach((id, i) => beats[i] && alive.add(id));
    }
    const dead = all.filter((e) => e.instanceId !== this.instanceId && !alive.has(e.instanceId));
    if (dead.length) void this.scale.redis.hdel(LIVE, ...dead.map((e) => e.live.sessionId)).catch(() => undefined);
    return all.filter((e) => alive.has(e.instanceId));
  }

  /** A live session of another (alive) instance, or null. */
  async find(sessionId: string): Promise<DirectoryEntry | null> {
    return (await this.others()).find((e) => e.live.sessionId === sessionId) ?? null;
  }

  /** True when another instance watches this instance's session (its frames are then published). */
  isWatchedElsewhere(sessionId: string): boolean {
    return this.remoteWatchers.has(sessionId);
  }

  /** A frame (or the `ended` message) of this instance's session, for its watchers on other instances. */
  publish(sessionId: string, text: string): void {
    void this.scale.redis.publish(framesChannel(sessionId), text).catch(() => undefined);
  }

  /**
   * Receive another instance's session frames; tells the driving instance, which publishes them while
   * any instance watches. Returns the function that stops watching.
   */
  async watch(entry: DirectoryEntry, onText: (text: string) => void): Promise<() => void> {
    const id = entry.live.sessionId;
    let handlers = this.frameHandlers.get(id);
    if (!handlers) {
      handlers = new Set();
      this.frameHandlers.set(id, handlers);
      await this.subscriber.subscribe(framesChannel(id));
    }
    handlers.add(onText);
    await this.control(entry.instanceId, { t: "watch", sessionId: id, watching: true, from: this.instanceId });
    return () => {
      const set = this.frameHandlers.get(id);
      set?.delete(onText);
      if (set && set.size === 0) {
        this.frameHandlers.delete(id);
        void this.subscriber.unsubscribe(framesChannel(id)).catch(() => undefined);
        void this.control(entry.instanceId, { t: "watch", sessionId: id, watching: false, from: this.instanceId }).catch(() => undefined);
      }
    };
  }

  /** A safety officer's STOP of a session another instance drives: that instance latches it (and audits it). */
  async requestEstop(entry: DirectoryEntry, byUserId: string): Promise<void> {
    await this.control(entry.instanceId, { t: "estop", sessionId: entry.live.sessionId, byUserId });
  }

  private async control(instanceId: string, msg: ControlMessage): Promise<void> {
    await this.scale.redis.publish(controlChannel(instanceId), JSON.stringify(msg));
  }

  async close(): Promise<void> {
    clearInterval(this.heartbeat);
    const mine = Object.entries(await this.scale.redis.hgetall(LIVE).catch(() => ({}) as Record<string, string>))
      .filter(([, t]) => (JSON.parse(t) as DirectoryEntry).instanceId === this.instanceId)
      .map(([id]) => id);
    if (mine.length) await this.scale.redis.hdel(LIVE, ...mine).catch(() => undefined);
    await this.scale.redis.del(instanceKey(this.instanceId)).catch(() => undefined);
  }
}
