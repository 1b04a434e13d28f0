import { generateIdFromEntropySize } from "lucia";
import { UniqueConstraintError, type Sequelize } from "sequelize";
import type { CreateUserInput, UpdateUserInput, User } from "@jogwright/shared";
import { AppError } from "../../errors.ts";
import { hashPassword } from "../../auth/password.ts";
import type { AppContext } from "../../context.ts";
import { recordAudit } from "../audit/service.ts";
import { accountChangesFor } from "./account-changes.ts";
import * as model from "./model.ts";

export const listUsers = (db: Sequelize) => model.listUsers(db);

/** `actor` is the admin doing it (null for the seed and test set-up); the change is audited either way. */
export async function createUser(db: Sequelize, input: CreateUserInput, actor: User | null = null): Promise<User> {
  const id = generateIdFromEntropySize(10);
  const passwordHash = await hashPassword(input.password);
  try {
    await db.transaction(async (transaction) => {
      await model.insertUser(db, { ...input, id, passwordHash }, transaction);
      const created = (await model.findUserById(db, id, transaction))!;
      await recordAudit(db, transaction, {
        actorId: actor?.id ?? null,
        entity: "user",
        entityId: id,
        action: "create",
        summary: `created ${created.username} (${created.displayName}) with roles ${created.roles.join(", ")}`,
        after: created,
      });
    });
  } catch (error) {
    if (error instanceof UniqueConstraintError) {
      throw new AppError(409, "conflict", `The user name "${input.username}" is taken.`, [
        { path: "username", message: "this user name is taken" },
      ]);
    }
    throw error;
  }
  return (await model.findUserById(db, id))!;
}

/**
 * Change an account. Deactivating it (or changing its password) ends its sessions; a change of roles,
 * active flag or password is published to the open live-jogging sockets at once (account-changes.ts). An
 * admin cannot take away their own admin role or deactivate themselves, and the last active admin always
 * stays.
 */
export async function updateUser(ctx: AppContext, actor: User, id: string, input: UpdateUserInput): Promise<User> {
  const { db, lucia } = ctx;
  const passwordHash = input.password === undefined ? undefined : await hashPassword(input.password);
  const { before, after } = await db.transaction(async (transaction) => {
    const existing = await model.findUserById(db, id, transaction);
    if (!existing) throw new AppError(404, "not_found", "No such user.");
    if (actor.id === id && input.isActive === false) {
      throw new AppError(409, "conflict", "You cannot deactivate your own account.");
    }
    if (actor.id === id && input.roles && !input.roles.includes("admin")) {
      throw new AppError(409, "conflict", "You cannot remove your own admin role; ask another admin.", [
        { path: "roles", message: "keep your own admin role" },
      ]);
    }
    await model.updateUserRow(
      db,
      id,
      { displayName: input.displayName, email: input.email, passwordHash, isActive: input.isActive },
      transaction,
    );
    if (input.roles) await model.replaceRoles(db, id, input.roles, transaction);
    if ((await model.countActiveAdmins(db, transaction)) === 0) {
      throw new AppError(409, "conflict", "At least one active admin must remain.");
    }
    const after = (await model.findUserById(db, id, transaction))!;
    const changes: string[] = [];
    if (input.displayName !== undefined && input.displayName !== existing.displayName) changes.push(`name → ${after.displayName}`);
    if (input.email !== undefined && input.email !== existing.email) changes.push(`e-mail → ${after.email}`);
    if (input.roles && after.roles.join() !== existing.roles.join()) changes.push(`roles ${existing.roles.join(", ")} → ${after.roles.join(", ")}`);
    if (input.isActive !== undefined && input.isActive !== existing.isActive) changes.push(input.isActive ? "reactivated" : "deactivated");
    if (passwordHash !== undefined) changes.push("password changed");
    // The most telling action names the entry; the summary lists every change.
    const action =
      input.isActive === false && existing.isActive ? "deactivate"
      : input.isActive === true && !existing.isActive ? "reactivate"
      : input.roles && after.roles.join() !== existing.roles.join() ? "roles"
      : passwordHash !== undefined ? "password"
      : "edit";
    await recordAudit(db, transaction, {
      actorId: actor.id,
      entity: "user",
      entityId: id,
      action,
      summary: `${existing.username}: ${changes.length ? changes.join("; ") : "no change"}`,
      before: existing,
      after,
    });
    return { before: existing, after };
  });
  const isSignedOut = input.isActive === false || passwordHash !== undefined;
  if (isSignedOut) await lucia.invalidateUserSessions(id);
  // After the commit, before the answer: open live-jogging sockets of this account stop, close or lose
  // what the new roles no longer allow now, not at their next periodic re-check (account-changes.ts).
  if (isSignedOut || before.isActive !== after.isActive || before.roles.join() !== after.roles.join()) {
    accountChangesFor(ctx).publish({ kind: "account", user: after, isSignedOut, isPasswordChanged: passwordHash !== undefined });
  }
  return (await model.findUserById(db, id))!;
}
