import { generateIdFromEntropySize } from "lucia";
import { Op, UniqueConstraintError, type Sequelize, type Transaction } from "sequelize";
import type { CreateUserInput, Role, UpdateUserInput, User } from "@jogwright/shared";
import { AppError } from "../../errors.ts";
import { hashPassword } from "../../auth/password.ts";
import type { AppContext } from "../../context.ts";
import { modelsOf } from "../../db/models.ts";
import { recordAudit } from "../audit/service.ts";
import { accountChangesFor } from "./account-changes.ts";

/**
 * Accounts and the people queries every other module asks (operators to pick, safety officers to mail,
 * engineers among some ids). Plain objects out: `User` as the API shows it, `Person` for recipients.
 */

/** Someone to show or mail. */
export interface Person {
  id: string;
  username: string;
  displayName: string;
  email: string;
}

const PERSON_ATTRIBUTES = ["id", "username", "displayName", "email"] as const;

export async function listUsers(db: Sequelize): Promise<User[]> {
  const users = await modelsOf(db).User.scope(["defaultScope", "withRoles"]).findAll({ order: [["username", "ASC"]] });
  return users.map((u) => u.toApi());
}

export async function findUserById(db: Sequelize, id: string, transaction?: Transaction): Promise<User | null> {
  const user = await modelsOf(db).User.scope(["defaultScope", "withRoles"]).findByPk(id, { transaction });
  return user?.toApi() ?? null;
}

/** Sign-in only: the account and its password hash. */
export async function findUserWithHashByUsername(db: Sequelize, username: string): Promise<{ user: User; passwordHash: string } | null> {
  const user = await modelsOf(db).User.scope(["withHash", "withRoles"]).findOne({ where: { username } });
  return user ? { user: user.toApi(), passwordHash: user.passwordHash } : null;
}

/** The id of the account with this user name, if any (the seed looks its cast up by name). */
export async function findUserIdByUsername(db: Sequelize, username: string): Promise<string | null> {
  const user = await modelsOf(db).User.findOne({ where: { username }, attributes: ["id"] });
  return user?.id ?? null;
}

/** Active accounts holding `role`, by display name. */
export async function listActiveWithRole(db: Sequelize, role: Role, transaction?: Transaction): Promise<Person[]> {
  const people = await modelsOf(db)
    .User.scope(["active", { method: ["withRole", role] }])
    .findAll({ attributes: [...PERSON_ATTRIBUTES], order: [["displayName", "ASC"], ["username", "ASC"]], transaction });
  return people.map(toPerson);
}

/** The operators a profile can be assigned to (GET /api/operators). */
export async function listOperators(db: Sequelize): Promise<Omit<Person, "email">[]> {
  return (await listActiveWithRole(db, "operator")).map(({ id, displayName, username }) => ({ id, displayName, username }));
}

/** Whether `id` is an active operator. */
export async function isActiveOperator(db: Sequelize, id: string, transaction?: Transaction): Promise<boolean> {
  const found = await modelsOf(db)
    .User.scope(["active", { method: ["withRole", "operator"] }])
    .findOne({ where: { id }, attributes: ["id"], transaction });
  return found !== null;
}

/** Active accounts among `ids` (mail recipients); `role`: only those holding it. */
export async function findActivePeople(db: Sequelize, ids: readonly string[], options: { role?: Role; transaction?: Transaction } = {}): Promise<Person[]> {
  if (ids.length === 0) return [];
  const scopes = options.role ? ["active", { method: ["withRole", options.role] as [string, Role] }] : ["active"];
  const people = await modelsOf(db)
    .User.scope(scopes)
    .findAll({ where: { id: { [Op.in]: [...new Set(ids)] } }, attributes: [...PERSON_ATTRIBUTES], transaction: options.transaction });
  return people.map(toPerson);
}

function toPerson(u: Person): Person {
  return { id: u.id, username: u.username, displayName: u.displayName, email: u.email };
}

/**
 * A new account with its roles (no audit: createUser audits; the seed audits its own). In `transaction`.
 */
export async function insertUser(
  db: Sequelize,
  u: { id: string; username: string; displayName: string; email: string; passwordHash: string; roles: readonly Role[] },
  transaction: Transaction,
): Promise<void> {
  const { User, UserRole } = modelsOf(db);
  await User.create({ id: u.id, username: u.username, displayName: u.displayName, email: u.email, passwordHash: u.passwordHash }, { transaction });
  await UserRole.bulkCreate(u.roles.map((role) => ({ userId: u.id, role })), { transaction });
}

/** `actor` is the admin doing it (null for the seed and test set-up); the change is audited either way. */
export async function createUser(db: Sequelize, input: CreateUserInput, actor: User | null = null): Promise<User> {
  const id = generateIdFromEntropySize(10);
  const passwordHash = await hashPassword(input.password);
  try {
    await db.transaction(async (transaction) => {
      await insertUser(db, { ...input, id, passwordHash }, transaction);
      const created = (await findUserById(db, id, transaction))!;
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
  return (await findUserById(db, id))!;
}

async function countActiveAdmins(db: Sequelize, transaction: Transaction): Promise<number> {
  return modelsOf(db).User.scope(["active", { method: ["withRole", "admin"] }]).count({ transaction });
}

/**
 * Change an account. Deactivating it (or changing its password) ends its sessions; a change of roles,
 * active flag or password is published to the open live-jogging sockets at once (account-changes.ts). An
 * admin cannot take away their own admin role or deactivate themselves, and the last active admin always
 * stays.
 */
export async function updateUser(ctx: AppContext, actor: User, id: string, input: UpdateUserInput): Promise<User> {
  const { db, lucia } = ctx;
  const { User, UserRole } = modelsOf(db);
  const passwordHash = input.password === undefined ? undefined : await hashPassword(input.password);
  const { before, after } = await db.transaction(async (transaction) => {
    const row = await User.findByPk(id, { transaction });
    if (!row) throw new AppError(404, "not_found", "No such user.");
    const existing = (await findUserById(db, id, transaction))!;
    if (actor.id === id && input.isActive === false) {
      throw new AppError(409, "conflict", "You cannot deactivate your own account.");
    }
    if (actor.id === id && input.roles && !input.roles.includes("admin")) {
      throw new AppError(409, "conflict", "You cannot remove your own admin role; ask another admin.", [
        { path: "roles", message: "keep your own admin role" },
      ]);
    }
    row.set({
      ...(input.displayName !== undefined ? { displayName: input.displayName } : {}),
      ...(input.email !== undefined ? { email: input.email } : {}),
      ...(passwordHash !== undefined ? { passwordHash } : {}),
      ...(input.isActive !== undefined ? { isActive: input.isActive } : {}),
    });
    // updated_at moves on every change, roles included (Sequelize sets it when the row is saved).
    row.changed("updatedAt", true);
    await row.save({ transaction });
    if (input.roles) {
      await UserRole.destroy({ where: { userId: id }, transaction });
      await UserRole.bulkCreate(input.roles.map((role) => ({ userId: id, role })), { transaction });
    }
    if ((await countActiveAdmins(db, transaction)) === 0) {
      throw new AppError(409, "conflict", "At least one active admin must remain.");
    }
    const after = (await findUserById(db, id, transaction))!;
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
  return (await findUserById(db, id))!;
}
