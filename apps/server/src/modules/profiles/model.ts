import { QueryTypes, type Sequelize, type Transaction } from "sequelize";
import {
  DRIVING_RULE,
  profileParamsSchema,
  type DrivingUser,
  type ProfileParams,
  type ProfileSummary,
  type ProfileVersion,
  type Role,
  type VersionState,
} from "@jogwright/shared";

/**
 * Data access for profiles, their immutable versions (profile_versions, guarded by triggers), the
 * versions' lifecycle (version_status) and approvals (append-only). Plain objects out.
 */
type VersionRow = {
  id: number;
  profile_id: number;
  number: number;
  parent_version_id: number | null;
  params: string | object;
  params_sha256: string;
  note: string;
  author_id: string;
  author_name: string;
  created_at: Date;
  locked_at: Date | null;
  state: VersionState;
  submitted_at: Date | null;
  decided_by: string | null;
  decided_by_name: string | null;
  decided_at: Date | null;
  decision_comment: string | null;
  exceeds_ceilings: number;
};

const VERSION_COLUMNS = `
  v.id, v.profile_id, v.number, v.parent_version_id, v.params, v.params_sha256, v.note, v.author_id,
  a.display_name AS author_name, v.created_at, v.locked_at, s.state, s.submitted_at, s.decided_by,
  d.display_name AS decided_by_name, s.decided_at, s.decision_comment, s.exceeds_ceilings`;
const VERSION_TABLES = `
  profile_versions v
  JOIN version_status s ON s.version_id = v.id
  JOIN users a ON a.id = v.author_id
  LEFT JOIN users d ON d.id = s.decided_by`;
const SELECT_VERSIONS = `SELECT ${VERSION_COLUMNS} FROM ${VERSION_TABLES}`;

// ---------------------------------------------------------------------------------------------------
// The driving rule in SQL
// ---------------------------------------------------------------------------------------------------

const stateList = (states: readonly VersionState[]) => {
  // The states are the shared enum's own words; checked anyway, since they are written into the SQL.
  if (!states.every((st) => /^[a-z]+$/.test(st))) throw new Error("unexpected version state");
  return states.length ? states.map((st) => `'${st}'`).join(", ") : "NULL";
};

/**
 * `isDriveable(version, user).isDriveable` as an SQL condition, built from the shared DRIVING_RULE (the same
 * definition isDriveable reads), over version_status alias `status` and profiles alias `profile`.
 * `userIdSql` is "?" (bound to the user's id) or a column; `usesUserId` says whether it appears.
 * The agreement test (driving.test.ts) checks it against isDriveable on every combination.
 */
export function driveableSql(
  roles: readonly Role[],
  aliases: { status: string; profile: string },
  userIdSql: string,
): { sql: string; usesUserId: boolean } {
  const { status: s, profile: p } = aliases;
  const parts: string[] = [];
  let usesUserId = false;
  if (roles.includes("engineer")) parts.push(`${s}.state IN (${stateList(DRIVING_RULE.engineerStates)})`);
  if (roles.includes("operator")) {
    parts.push(`(${p}.operator_id = ${userIdSql} AND ${s}.state IN (${stateList(DRIVING_RULE.operatorStates)}) AND ${s}.exceeds_ceilings = 0)`);
    usesUserId = true;
  }
  return { sql: parts.length ? `(${parts.join(" OR ")})` : "FALSE", usesUserId };
}

/** The version a profile's own operator may drive: isDriveable for {id: p.operator_id, roles: ["operator"]}. */
const OPERATOR_DRIVEABLE_SQL = driveableSql(["operator"], { status: "s2", profile: "p" }, "p.operator_id").sql;

const iso = (d: Date | null) => (d ? new Date(d).toISOString() : null);

/** A version as the API shows it, plus when it was locked (null until approved). */
export type VersionRecord = ProfileVersion & { lockedAt: string | null };

function toVersion(row: VersionRow): VersionRecord {
  return {
    id: row.id,
    profileId: row.profile_id,
    number: row.number,
    parentVersionId: row.parent_version_id,
    state: row.state,
    params: profileParamsSchema.parse(typeof row.params === "string" ? JSON.parse(row.params) : row.params),
    paramsSha256: row.params_sha256,
    note: row.note,
    authorId: row.author_id,
    authorName: row.author_name,
    createdAt: new Date(row.created_at).toISOString(),
    submittedAt: iso(row.submitted_at),
    decidedById: row.decided_by,
    decidedByName: row.decided_by_name,
    decidedAt: iso(row.decided_at),
    decisionComment: row.decision_comment,
    exceedsCeilings: row.exceeds_ceilings === 1,
    lockedAt: iso(row.locked_at),
  };
}

/** The API shape of a version (without the internal lockedAt). */
export function publicVersion(v: VersionRecord): ProfileVersion {
  const { lockedAt: _lockedAt, ...rest } = v;
  return rest;
}

type ProfileRow = {
  id: number;
  name: string;
  operator_id: string;
  operator_name: string;
  arm_id: number;
  arm_name: string;
  created_by: string;
  created_at: Date;
  driveable_version_id: number | null;
};

const SELECT_PROFILES = `
  SELECT p.id, p.name, p.operator_id, o.display_name AS operator_name, p.arm_id, r.name AS arm_name, p.created_by, p.created_at,
         (SELECT s2.version_id FROM version_status s2 JOIN profile_versions v2 ON v2.id = s2.version_id
          WHERE v2.profile_id = p.id AND ${OPERATOR_DRIVEABLE_SQL}
          ORDER BY v2.number DESC LIMIT 1) AS driveable_version_id
  FROM profiles p JOIN users o ON o.id = p.operator_id JOIN arms r ON r.id = p.arm_id`;

/** A profile with who created it (internal) on top of the API summary. */
export type ProfileRecord = ProfileSummary & { createdById: string };

async function toSummaries(db: Sequelize, rows: ProfileRow[], transaction?: Transaction): Promise<ProfileRecord[]> {
  if (rows.length === 0) return [];
  const latest = await db.query<VersionRow>(
    `${SELECT_VERSIONS}
     WHERE v.profile_id IN (?) AND v.number = (SELECT MAX(v3.number) FROM profile_versions v3 WHERE v3.profile_id = v.profile_id)`,
    { replacements: [rows.map((r) => r.id)], type: QueryTypes.SELECT, transaction },
  );
  const byProfile = new Map(latest.map((v) => [v.profile_id, toVersion(v)]));
  return rows
    .filter((r) => byProfile.has(r.id))
    .map((r) => ({
      id: r.id,
      name: r.name,
      operatorId: r.operator_id,
      operatorName: r.operator_name,
      armId: r.arm_id,
      armName: r.arm_name,
      createdAt: new Date(r.created_at).toISOString(),
      latestVersion: publicVersion(byProfile.get(r.id)!),
      driveableVersionId: r.driveable_version_id === null ? null : Number(r.driveable_version_id),
      createdById: r.created_by,
    }));
}

export function publicProfile(p: ProfileRecord): ProfileSummary {
  const { createdById: _createdById, ...rest } = p;
  return rest;
}

export async function listProfiles(db: Sequelize, filter: { operatorId?: string } = {}): Promise<ProfileRecord[]> {
  const rows = await db.query<ProfileRow>(
    `${SELECT_PROFILES} ${filter.operatorId ? "WHERE p.operator_id = ?" : ""} ORDER BY p.name, p.id`,
    { replacements: filter.operatorId ? [filter.operatorId] : [], type: QueryTypes.SELECT },
  );
  return toSummaries(db, rows);
}

export async function findProfile(db: Sequelize, id: number, transaction?: Transaction): Promise<ProfileRecord | null> {
  const rows = await db.query<ProfileRow>(`${SELECT_PROFILES} WHERE p.id = ?`, { replacements: [id], type: QueryTypes.SELECT, transaction });
  return (await toSummaries(db, rows, transaction))[0] ?? null;
}

export async function findProfileByName(db: Sequelize, name: string, operatorId: string): Promise<ProfileRecord | null> {
  const rows = await db.query<ProfileRow>(`${SELECT_PROFILES} WHERE p.name = ? AND p.operator_id = ?`, {
    replacements: [name, operatorId],
    type: QueryTypes.SELECT,
  });
  return (await toSummaries(db, rows))[0] ?? null;
}

/** Lock the profile row until the transaction ends: every change to a profile's versions goes through it. */
export async function lockProfile(db: Sequelize, id: number, transaction: Transaction): Promise<boolean> {
  const rows = await db.query("SELECT id FROM profiles WHERE id = ? FOR UPDATE", { replacements: [id], type: QueryTypes.SELECT, transaction });
  return rows.length === 1;
}

export async function insertProfile(
  db: Sequelize,
  p: { name: string; operatorId: string; armId: number; createdBy: string },
  transaction: Transaction,
): Promise<number> {
  const [id] = await db.query("INSERT INTO profiles (name, operator_id, arm_id, created_by) VALUES (?, ?, ?, ?)", {
    replacements: [p.name, p.operatorId, p.armId, p.createdBy],
    type: QueryTypes.INSERT,
    transaction,
  });
  return Number(id);
}

/** A new immutable version and its lifecycle row (draft). */
export async function insertVersion(
  db: Sequelize,
  v: { profileId: number; number: number; parentVersionId: number | null; params: ProfileParams; paramsSha256: string; note: string; authorId: string },
  transaction: Transaction,
): Promise<number> {
  const [id] = await db.query(
    `INSERT INTO profile_versions (profile_id, number, parent_version_id, params, params_sha256, note, author_id)
     VALUES (?, ?, ?, ?, ?, ?, ?)`,
    {
      replacements: [v.profileId, v.number, v.parentVersionId, JSON.stringify(v.params), v.paramsSha256, v.note, v.authorId],
      type: QueryTypes.INSERT,
      transaction,
    },
  );
  await db.query("INSERT INTO version_status (version_id, state) VALUES (?, 'draft')", { replacements: [Number(id)], transaction });
  return Number(id);
}

export async function findVersion(db: Sequelize, id: number, transaction?: Transaction): Promise<VersionRecord | null> {
  const rows = await db.query<VersionRow>(`${SELECT_VERSIONS} WHERE v.id = ?`, { replacements: [id], type: QueryTypes.SELECT, transaction });
  return rows[0] ? toVersion(rows[0]) : null;
}

/** The profile's newest version; a locking read, so call it after lockProfile inside the transaction. */
export async function findLatestVersion(db: Sequelize, profileId: number, transaction: Transaction): Promise<VersionRecord | null> {
  const rows = await db.query<VersionRow>(`${SELECT_VERSIONS} WHERE v.profile_id = ? ORDER BY v.number DESC LIMIT 1 LOCK IN SHARE MODE`, {
    replacements: [profileId],
    type: QueryTypes.SELECT,
    transaction,
  });
  return rows[0] ? toVersion(rows[0]) : null;
}

/** Newest first. */
export async function listVersions(db: Sequelize, profileId: number): Promise<VersionRecord[]> {
  const rows = await db.query<VersionRow>(`${SELECT_VERSIONS} WHERE v.profile_id = ? ORDER BY v.number DESC`, {
    replacements: [profileId],
    type: QueryTypes.SELECT,
  });
  return rows.map(toVersion);
}

export async function findApprovedVersion(db: Sequelize, profileId: number, transaction?: Transaction): Promise<VersionRecord | null> {
  const rows = await db.query<VersionRow>(`${SELECT_VERSIONS} WHERE v.profile_id = ? AND s.state = 'approved' ORDER BY v.number DESC LIMIT 1`, {
    replacements: [profileId],
    type: QueryTypes.SELECT,
    transaction,
  });
  return rows[0] ? toVersion(rows[0]) : null;
}

export async function listVersionsInState(db: Sequelize, state: VersionState, transaction?: Transaction): Promise<VersionRecord[]> {
  const rows = await db.query<VersionRow>(`${SELECT_VERSIONS} WHERE s.state = ? ORDER BY COALESCE(s.submitted_at, v.created_at), v.id`, {
    replacements: [state],
    type: QueryTypes.SELECT,
    transaction,
  });
  return rows.map(toVersion);
}

/** A version someone may drive, with its profile's names (what the picker shows). */
export type DriveableVersionRecord = VersionRecord & { profileName: string; operatorId: string; operatorName: string; armId: number; armName: string };

/**
 * Every version `user` may drive, by the SQL form of the driving rule (driveableSql): by profile name,
 * newest version first.
 */
export async function listDriveableVersions(db: Sequelize, user: DrivingUser): Promise<DriveableVersionRecord[]> {
  const rule = driveableSql(user.roles, { status: "s", profile: "p" }, "?");
  const rows = await db.query<VersionRow & { profile_name: string; operator_id: string; operator_name: string; arm_id: number; arm_name: string }>(
    `SELECT ${VERSION_COLUMNS}, p.name AS profile_name, p.operator_id, o.display_name AS operator_name, p.arm_id, r.name AS arm_name
     FROM ${VERSION_TABLES}
     JOIN profiles p ON p.id = v.profile_id JOIN users o ON o.id = p.operator_id JOIN arms r ON r.id = p.arm_id
     WHERE ${rule.sql} ORDER BY p.name, p.id, v.number DESC`,
    { replacements: rule.usesUserId ? [user.id] : [], type: QueryTypes.SELECT },
  );
  return rows.map((r) => ({
    ...toVersion(r),
    profileName: r.profile_name,
    operatorId: r.operator_id,
    operatorName: r.operator_name,
    armId: r.arm_id,
    armName: r.arm_name,
  }));
}

export async function updateStatus(
  db: Sequelize,
  versionId: number,
  fields: {
    state?: VersionState;
    submittedAt?: "now";
    decidedBy?: string | null;
    decidedAt?: "now" | null;
    decisionComment?: string | null;
    exceedsCeilings?: boolean;
  },
  transaction: Transaction,
): Promise<void> {
  const sets: string[] = [];
  const values: unknown[] = [];
  if (fields.state !== undefined) (sets.push("state = ?"), values.push(fields.state));
  if (fields.submittedAt === "now") sets.push("submitted_at = CURRENT_TIMESTAMP(3)");
  if (fields.decidedBy !== undefined) (sets.push("decided_by = ?"), values.push(fields.decidedBy));
  if (fields.decidedAt === "now") sets.push("decided_at = CURRENT_TIMESTAMP(3)");
  if (fields.decidedAt === null) sets.push("decided_at = NULL");
  if (fields.decisionComment !== undefined) (sets.push("decision_comment = ?"), values.push(fields.decisionComment));
  if (fields.exceedsCeilings !== undefined) (sets.push("exceeds_ceilings = ?"), values.push(fields.exceedsCeilings ? 1 : 0));
  if (sets.length === 0) return;
  await db.query(`UPDATE version_status SET ${sets.join(", ")} WHERE version_id = ?`, { replacements: [...values, versionId], transaction });
}

export interface ApprovalRecord {
  id: number;
  versionId: number;
  approverId: string;
  approverName: string;
  approvedAt: string;
  comment: string;
  paramsSha256: string;
}

/**
 * Approve a submitted version: the approvals row's triggers (migration 0014) check it, lock the version
 * row and set version_status to approved with this approver, time and comment, in this one statement.
 */
export async function insertApproval(
  db: Sequelize,
  a: { versionId: number; approverId: string; comment: string; paramsSha256: string },
  transaction: Transaction,
): Promise<number> {
  const [id] = await db.query("INSERT INTO approvals (version_id, approver_id, comment, params_sha256) VALUES (?, ?, ?, ?)", {
    replacements: [a.versionId, a.approverId, a.comment, a.paramsSha256],
    type: QueryTypes.INSERT,
    transaction,
  });
  return Number(id);
}

export async function findApproval(db: Sequelize, versionId: number, transaction?: Transaction): Promise<ApprovalRecord | null> {
  const rows = await db.query<{
    id: number;
    version_id: number;
    approver_id: string;
    approver_name: string;
    approved_at: Date;
    comment: string;
    params_sha256: string;
  }>(
    `SELECT ap.id, ap.version_id, ap.approver_id, u.display_name AS approver_name, ap.approved_at, ap.comment, ap.params_sha256
     FROM approvals ap JOIN users u ON u.id = ap.approver_id WHERE ap.version_id = ?`,
    { replacements: [versionId], type: QueryTypes.SELECT, transaction },
  );
  const r = rows[0];
  return r
    ? {
        id: r.id,
        versionId: r.version_id,
        approverId: r.approver_id,
        approverName: r.approver_name,
        approvedAt: new Date(r.approved_at).toISOString(),
        comment: r.comment,
        paramsSha256: r.params_sha256,
      }
    : null;
}

export interface Person {
  id: string;
  username: string;
  displayName: string;
  email: string;
}

/** Active accounts holding a role. */
export async function listActiveWithRole(db: Sequelize, role: Role, transaction?: Transaction): Promise<Person[]> {
  const rows = await db.query<{ id: string; username: string; display_name: string; email: string }>(
    `SELECT u.id, u.username, u.display_name, u.email FROM users u JOIN user_roles r ON r.user_id = u.id AND r.role = ?
     WHERE u.is_active = 1 ORDER BY u.display_name, u.username`,
    { replacements: [role], type: QueryTypes.SELECT, transaction },
  );
  return rows.map((r) => ({ id: r.id, username: r.username, displayName: r.display_name, email: r.email }));
}

/** Active accounts by id (for mail recipients). */
export async function findPeople(db: Sequelize, ids: string[], transaction?: Transaction): Promise<Person[]> {
  if (ids.length === 0) return [];
  const rows = await db.query<{ id: string; username: string; display_name: string; email: string }>(
    "SELECT id, username, display_name, email FROM users WHERE id IN (?) AND is_active = 1",
    { replacements: [ids], type: QueryTypes.SELECT, transaction },
  );
  return rows.map((r) => ({ id: r.id, username: r.username, displayName: r.display_name, email: r.email }));
}

/** The engineers of a profile: its creator and every author of one of its versions, still active engineers. */
export async function listProfileEngineers(db: Sequelize, profileIds: number[], transaction?: Transaction): Promise<Person[]> {
  if (profileIds.length === 0) return [];
  const rows = await db.query<{ id: string; username: string; display_name: string; email: string }>(
    `SELECT DISTINCT u.id, u.username, u.display_name, u.email FROM users u
     JOIN user_roles r ON r.user_id = u.id AND r.role = 'engineer'
     WHERE u.is_active = 1 AND (u.id IN (SELECT created_by FROM profiles WHERE id IN (?))
                                OR u.id IN (SELECT author_id FROM profile_versions WHERE profile_id IN (?)))`,
    { replacements: [profileIds, profileIds], type: QueryTypes.SELECT, transaction },
  );
  return rows.map((r) => ({ id: r.id, username: r.username, displayName: r.display_name, email: r.email }));
}
