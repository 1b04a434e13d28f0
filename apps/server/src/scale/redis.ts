import { randomUUID } from "node:crypto";
import { Redis } from "ioredis";
import { RateLimiterMemory, RateLimiterRedis, type RateLimiterAbstract } from "rate-limiter-flexible";

/**
 * Scale-out (docs/scaling.md): several instances share one Redis, named by REDIS_URL. Without it the
 * product is one process and nothing here runs. What goes through Redis:
 * - the rate limiters (sign-in, jog starts), so a limit holds over all instances;
 * - the queue of tuning-bench runs (BullMQ, modules/trials/trial-queue.ts), so runs of a sweep started
 *   on one instance are taken by the workers of any;
 * - the live-session directory, the watch streams and a watcher's STOP (modules/jog), so a safety officer
 *   on one instance watches and stops a session driven on another.
 * Every connection is made here, named after the instance, and closed by close().
 */
export class Scale {
  /** This process among the instances (logs, the session directory). */
  readonly instanceId = `${process.pid}-${randomUUID().slice(0, 8)}`;
  /** Commands (limiters, the session directory, publishing). */
  readonly redis: Redis;
  private readonly extra: Redis[] = [];

  constructor(readonly url: string) {
    this.redis = this.connection("commands");
  }

  /**
   * A new connection (a subscriber or a BullMQ worker needs its own). BullMQ requires
   * maxRetriesPerRequest: null; commands then wait for a reconnect instead of failing after 20 retries.
   */
  connection(role: string): Redis {
    const c = new Redis(this.url, { maxRetriesPerRequest: null, connectionName: `jogwright-${this.instanceId}-${role}`, lazyConnect: false });
    // ioredis reconnects by itself; an error between two attempts is logged once per kind, never thrown.
    let lastLogged = "";
    c.on("error", (error: Error) => {
      if (error.message === lastLogged) return;
      lastLogged = error.message;
      console.error(`[jogwright] redis (${role}): ${error.message}`);
    });
    if (this.redis) this.extra.push(c);
    return c;
  }

  async close(): Promise<void> {
    await Promise.allSettled([...this.extra, this.redis].map((c) => c.quit()));
  }
}

/** A Scale when REDIS_URL is set, else null (one instance, everything in memory). */
export function createScale(redis: { url: string } | null): Scale | null {
  return redis ? new Scale(redis.url) : null;
}

/**
 * A rate limiter (rate-limiter-flexible): in Redis when scaled out, so its count is shared by every
 * instance (`consume` stays atomic there: one Lua script), else in this process's memory.
 */
export function rateLimiter(scale: Scale | null, opts: { keyPrefix: string; points: number; duration: number }): RateLimiterAbstract {
  return scale
    ? new RateLimiterRedis({ storeClient: scale.redis, keyPrefix: `jogwright:${opts.keyPrefix}`, points: opts.points, duration: opts.duration })
    : new RateLimiterMemory(opts);
}
