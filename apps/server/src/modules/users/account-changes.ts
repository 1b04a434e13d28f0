import type { User } from "@jogwright/shared";
import type { AppContext } from "../../context.ts";

/**
 * What open connections must learn the moment it happens (issue 11, item 2): an account's roles, active
 * flag or password changed (the users service publishes it from the admin's PATCH, after the commit), or
 * one cookie session was signed out (the sign-out route). The live-jogging sockets (jog/socket.ts)
 * subscribe and apply each change at once — a controlled stop and close for a deactivated account, a
 * downgrade for a role change — instead of finding out at their periodic re-check.
 *
 * Each account also has an epoch, raised by every published change to it. A connection remembers the
 * epoch of the account it holds and compares it on every privileged message (a Map lookup): a mismatch —
 * a change published while its account was being read at the upgrade — makes it re-read the account
 * before it does anything privileged. In memory, per app: changes made outside the API (the db CLI, SQL)
 * are found by the sockets' periodic re-read of the account instead.
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
  | { kind: "signed-out"; userId: string; sessionId: string };

export type AccountChangeListener = (change: AccountChange) => void;

export class AccountChanges {
  private readonly epochs = new Map<string, number>();
  private readonly listeners = new Set<AccountChangeListener>();
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
}

const byContext = new WeakMap<AppContext, AccountChanges>();

/** The one AccountChanges of an app context (created on first use). */
export function accountChangesFor(ctx: AppContext): AccountChanges {
  let changes = byContext.get(ctx);
  if (!changes) {
    changes = new AccountChanges();
    byContext.set(ctx, changes);
  }
  return changes;
}
