import { QueryTypes, type Sequelize, type Transaction } from "sequelize";
import type { Role, User } from "@jogwright/shared";

/** Data access for accounts. Returns plain objects; the password hash never leaves this module except for sign-in. */
type UserRow = {
  id: string;
  username: string;
  display_name: string;
  email: string;
  password_hash: string;
  is_active: number;
  created_at: Date;
  updated_at: Date;
  roles: string | null;
};

const SELECT_USERS = `
  SELECT u.id, u.username, u.display_name, u.email, u.password_hash, u.is_active, u.created_at, u.updated_at,
         GROUP_CONCAT(r.role ORDER BY r.role) AS roles
  FROM users u LEFT JOIN user_roles r ON r.user_id = u.id`;

function toUser(row: UserRow): User {
  return {
    id: row.id,
    username: row.username,
    displayName: row.display_name,
    email: row.email,
    roles: row.roles ? (row.roles.split(",") as Role[]) : [],
    isActive: row.is_active === 1,
    createdAt: new Date(row.created_at).toISOString(),
    updatedAt: new Date(row.updated_at).toISOString(),
  };
}

export async function listUsers(db: Sequelize): Promise<User[]> {
  const rows = await db.query<UserRow>(`${SELECT_USERS} GROUP BY u.id ORDER BY u.username`, { type: QueryTypes.SELECT });
  return rows.map(toUser);
}

export async function findUserById(db: Sequelize, id: string, transaction?: Transaction): Promise<User | null> {
  const rows = await db.query<UserRow>(`${SELECT_USERS} WHERE u.id = ? GROUP BY u.id`, {
    replacements: [id],
    type: QueryTypes.SELECT,
    transaction,
  });
  return rows[0] ? toUser(rows[0]) : null;
}

export async function findUserWithHashByUsername(
  db: Sequelize,
  username: string,
): Promise<{ user: User; passwordHash: string } | null> {
  const rows = await db.query<UserRow>(`${SELECT_USERS} WHERE u.username = ? GROUP BY u.id`, {
    replacements: [username],
    type: QueryTypes.SELECT,
  });
  const row = rows[0];
  return row ? { user: toUser(row), passwordHash: row.password_hash } : null;
}

export async function insertUser(
  db: Sequelize,
  u: { id: string; username: string; displayName: string; email: string; passwordHash: string; roles: Role[] },
  transaction: Transaction,
): Promise<void> {
  await db.query(
    "INSERT INTO users (id, username, display_name, email, password_hash) VALUES (?, ?, ?, ?, ?)",
    { replacements: [u.id, u.username, u.displayName, u.email, u.passwordHash], transaction },
  );
  await replaceRoles(db, u.id, u.roles, transaction);
}

export async function updateUserRow(
  db: Sequelize,
  id: string,
  fields: { displayName?: string; email?: string; passwordHash?: string; isActive?: boolean },
  transaction: Transaction,
): Promise<void> {
  const sets: string[] = [];
  const values: unknown[] = [];
  if (fields.displayName !== undefined) (sets.push("display_name = ?"), values.push(fields.displayName));
  if (fields.email !== undefined) (sets.push("email = ?"), values.push(fields.email));
  if (fields.passwordHash !== undefined) (sets.push("password_hash = ?"), values.push(fields.passwordHash));
  if (fields.isActive !== undefined) (sets.push("is_active = ?"), values.push(fields.isActive ? 1 : 0));
  // Touch updated_at even when only roles change.
  sets.push("updated_at = CURRENT_TIMESTAMP(3)");
  await db.query(`UPDATE users SET ${sets.join(", ")} WHERE id = ?`, { replacements: [...values, id], transaction });
}

export async function replaceRoles(db: Sequelize, userId: string, roles: Role[], transaction: Transaction): Promise<void> {
  await db.query("DELETE FROM user_roles WHERE user_id = ?", { replacements: [userId], transaction });
  for (const role of roles) {
    await db.query("INSERT INTO user_roles (user_id, role) VALUES (?, ?)", { replacements: [userId, role], transaction });
  }
}

export async function countActiveAdmins(db: Sequelize, transaction?: Transaction): Promise<number> {
  const rows = await db.query<{ n: number | bigint }>(
    "SELECT COUNT(*) AS n FROM users u JOIN user_roles r ON r.user_id = u.id AND r.role = 'admin' WHERE u.is_active = 1",
    { type: QueryTypes.SELECT, transaction },
  );
  return Number(rows[0]?.n ?? 0);
}
