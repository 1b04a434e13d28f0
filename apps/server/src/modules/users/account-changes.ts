import type { User } from "@jogwright/shared";
import type { AppContext } from "../../context.ts";
import type { Scale } from "../../scale/redis.ts";

/**
 * What open connections must learn the moment it happens (issue 11, item 2): an account's roles, active
 * flag or password changed (the users service publishes it from the admin's PATCH, after the commit), or
 * one cookie session was signed out (the sign-out route), or what may be driven changed (a ceiling change
 * that flagged versions, an approval, a retirement: `versions`). The live-jogging sockets (jog/socket.ts)
 * subscribe and apply each change at once — a controlled stop and close for a deactivated account, a
 * downgrade for a role change, a re-check of the driven version for `versions` — instead of finding out at
 * their periodic re-check.
 *
 * Each account also has an epoch, raised by every published change to it. A connection remembers the
 * epoch of the account it holds and compares it on every privileged message (a Map lookup): a mismatch —
 * a change published while its account was being read at the upgrade — makes it re-read the account
 * before it does anything privileged. In memory, per app: changes made outside the API (the db CLI, SQL)
 * are found by the sockets' periodic re-read of the account instead.
 *
 * Scaled out (REDIS_URL, docs/scaling.md) every change is also published on the Redis channel
 * `jogwright:account-changes`, and each instance delivers the changes of the others to its own listeners:
 * an account deactivated through instance A stops and closes its sockets on instance B at once too.
 */

export type AccountChange =
  | {
      kind: "account";
      /** The account after the change. */
      user: User;
      /** Its cookie sessions were ended with the change (deactivated, password changed). */
      isSignedOut: boolean;
      /** The password was changed (its sessions were ended for that reason). */
      isPasswordChanged: boolean;
    }
  | { kind: "signed-out"; userId: string; sessionId: string }
  /**
   * Versions may have stopped being driveable: a ceiling change flagged approved versions, an approval
   * superseded the profile's approved version, a version was retired. Not tied to one account: every
   * connection that drives re-checks its version now, instead of at its periodic re-check.
   */
  | { kind: "versions"; why: "ceilings-changed" | "approved" | "retired" };

export type AccountChangeListener = (change: AccountChange) => void;

export class AccountChanges {
  private readonly epochs = new Map<string, number>();
  private readonly listeners = new Set<AccountChangeListener>();
  /** Scaled out: sends a change to the other instances (set by relayThroughRedis). */
  private relay: ((change: AccountChange) => void) | null = null;
  /**
   * Every change published so far, of any kind and account. A connection reads it before it reads its
   * account at the upgrade; if it moved by the time the connection listens, a change may have been missed.
   */
  serial = 0;

  /** The account's epoch: 0 until its first change in this process, then raised by each one. */
  epochOf(userId: string): number {
    return this.epochs.get(userId) ?? 0;
  }

  /**
   * Tells every listener, synchronously (a failing one is logged); an account change first raises the
   * account's epoch (a sign-out concerns one cookie session, not the account).
   */
  publish(change: AccountChange): void {
    this.deliver(change);
    this.relay?.(change);
  }

  /** Another instance's change (scaled out), or this one's: the local part of publish. */
  deliver(change: AccountChange): void {
    this.serial++;
    if (change.kind === "account") this.epochs.set(change.user.id, this.epochOf(change.user.id) + 1);
    for (const listener of this.listeners) {
      try {
        listener(change);
      } catch (error) {
        console.error("[jogwright] an account change listener failed:", error);
      }
    }
  }

  subscribe(listener: AccountChangeListener): () => void {
    this.listeners.add(listener);
    return () => this.listeners.delete(listener);
  }

  /**
   * Publishes this instance's changes on the shared channel and delivers the other instances' changes here.
   * A message that cannot be read is logged and dropped (the sockets' periodic re-read still finds the change).
   */
  relayThroughRedis(scale: Scale): void {
    const subscriber = scale.connection("account-changes");
    subscriber.on("message", (_channel: string, text: string) => {
      try {
        const { from, change } = JSON.parse(text) as { from: string; change: AccountChange };
        if (from !== scale.instanceId) this.deliver(change);
      } catch (error) {
        console.error(`[jogwright] an account change from another instance could not be read: ${(error as Error).message}`);
      }
    });
    void subscriber.subscribe(ACCOUNT_CHANGES_CHANNEL).catch((e: Error) => console.error(`[jogwright] account changes channel: ${e.message}`));
    this.relay = (change) => {
      void scale.redis.publish(ACCOUNT_CHANGES_CHANNEL, JSON.stringify({ from: scale.instanceId, change })).catch((e: Error) => console.error(`[jogwright] account change not sent to the other instances: ${e.message}`));
    };
  }
}

const ACCOUNT_CHANGES_CHANNEL = "jogwright:account-changes";

const byContext = new WeakMap<AppContext, AccountChanges>();

/** The one AccountChanges of an app context (created on first use). */
export function accountChangesFor(ctx: AppContext): AccountChanges {
  let changes = byContext.get(ctx);
  if (!changes) {
    changes = new AccountChanges();
    if (ctx.scale) changes.relayThroughRedis(ctx.scale);
    byContext.set(ctx, changes);
  }
  return changes;
}
