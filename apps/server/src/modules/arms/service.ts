import { randomBytes } from "node:crypto";
import { Op, fn, col, type Sequelize, type Transaction } from "sequelize";
import {
  armModelSchema,
  canonicalJson,
  toolPoseOf,
  toolTransform,
  type Arm,
  type ArmDetail,
  type ArmModel,
  type ArmRevision,
  type CreateArmInput,
  type EditArmInput,
  type Tool,
  type ToolInput,
  type User,
} from "@jogwright/shared";
import { AppError } from "../../errors.ts";
import { modelsOf } from "../../db/models.ts";
import { recordAudit } from "../audit/service.ts";
import type { ArmRevisionModel } from "./model.ts";
import { rigidTransformProblem } from "./upload.ts";

/**
 * What the app asks of the arms: every arm, one arm, the arm a profile version was saved on, the arm
 * library's revisions and tools, and the demo seed's refresh by slug. Other modules import this file,
 * never model.ts. Plain objects out.
 *
 * Revisions (issue 12): an arm's kinematics are never changed in place. Every definition is a row of
 * `arm_revisions` (immutable, triggers of migration 0018); `arms.model`/`ready_pose` are the latest
 * revision's copy, so `findArm`/`listArms` give the arm as it is today. A profile version names the
 * revision and tool it was saved on (`version_arms`); `findArmForVersion` gives that arm, and a version
 * moves to another revision only by saving a new version.
 */

export async function listArms(db: Sequelize): Promise<Arm[]> {
  const arms = await modelsOf(db).Arm.findAll({ order: [["name", "ASC"]] });
  return arms.map((a) => a.toApi());
}

export async function findArm(db: Sequelize, id: number): Promise<Arm | null> {
  const arm = await modelsOf(db).Arm.findByPk(id);
  return arm?.toApi() ?? null;
}

/** The id of the arm with this slug, if any (the demo seed finds its arms by slug). */
export async function findArmIdBySlug(db: Sequelize, slug: string): Promise<number | null> {
  const arm = await modelsOf(db).Arm.findOne({ where: { slug }, attributes: ["id"] });
  return arm?.id ?? null;
}

/** The stored definition of an arm by slug, as the seed compares it (null when there is none). */
export async function findArmDefinitionBySlug(
  db: Sequelize,
  slug: string,
  transaction?: Transaction,
): Promise<{ id: number; slug: string; name: string; description: string; model: unknown; readyPose: number[] } | null> {
  const arm = await modelsOf(db).Arm.findOne({ where: { slug }, transaction });
  return arm ? { id: arm.id, slug: arm.slug, name: arm.name, description: arm.description, model: arm.model, readyPose: arm.readyPose } : null;
}

/**
 * Insert or refresh an arm by slug (the demo seed uses it; idempotent): INSERT … ON DUPLICATE KEY UPDATE
 * of the definition only, so `updated_at` moves (its ON UPDATE) only when the definition changed. When
 * the kinematics differ from the latest revision (or there is none yet), a new revision is added with
 * the model's tool transform as its tool: the demo arms are revision 1 with their tool.
 */
export async function upsertArmBySlug(
  db: Sequelize,
  arm: { slug: string; name: string; description: string; model: unknown; readyPose: number[] },
  transaction?: Transaction,
): Promise<void> {
  const { Arm } = modelsOf(db);
  await Arm.bulkCreate([arm], { updateOnDuplicate: ["name", "description", "model", "readyPose"], transaction });
  const stored = (await Arm.findOne({ where: { slug: arm.slug }, attributes: ["id"], transaction }))!;
  const latest = await latestRevisionRow(db, stored.id, transaction);
  if (latest && canonicalJson([latest.model, latest.readyPose]) === canonicalJson([arm.model, arm.readyPose])) return;
  const model = armModelSchema.parse(arm.model);
  const revision = await insertRevision(db, transaction, stored.id, { model, readyPose: arm.readyPose, note: "Demo arm (seed).", createdBy: null });
  if (model.tool) await insertTool(db, transaction, revision.id, { name: "Flange tool", ...toolPoseOf(model.tool), massKg: 0, note: "The demo arm's tool (seed)." }, null);
}

// ---------------------------------------------------------------------------------------------------
// Revisions and tools: reading
// ---------------------------------------------------------------------------------------------------

async function latestRevisionRow(db: Sequelize, armId: number, transaction?: Transaction): Promise<ArmRevisionModel | null> {
  return modelsOf(db).ArmRevision.findOne({ where: { armId }, order: [["revision", "DESC"]], transaction });
}

/** The arm model a version drives: the revision's model with the tool's transform as its tool (if any). */
export function modelWithTool(model: ArmModel, tool: Pick<Tool, "positionM" | "rpyRad"> | null): ArmModel {
  return tool ? { ...model, tool: toolTransform(tool.positionM, tool.rpyRad) } : model;
}

/** Every revision of an arm, newest first, with its tools and how many versions name it. */
export async function listRevisions(db: Sequelize, armId: number, transaction?: Transaction): Promise<ArmRevision[]> {
  const { ArmRevision, ArmTool, VersionArm } = modelsOf(db);
  const rows = await ArmRevision.findAll({ where: { armId }, order: [["revision", "DESC"]], transaction });
  const ids = rows.map((r) => r.id);
  if (ids.length === 0) return [];
  const tools = await ArmTool.findAll({ where: { armRevisionId: { [Op.in]: ids } }, order: [["id", "ASC"]], transaction });
  const counts = (await VersionArm.findAll({
    where: { armRevisionId: { [Op.in]: ids } },
    attributes: ["armRevisionId", [fn("COUNT", col("version_id")), "n"]],
    group: ["armRevisionId"],
    raw: true,
    transaction,
  })) as unknown as { armRevisionId: number; n: number | string }[];
  // Authors by name, deactivated ones too (a revision keeps who made it).
  const authorIds = [...new Set(rows.map((r) => r.createdBy).filter((id): id is string => id !== null))];
  const authors = authorIds.length ? await modelsOf(db).User.findAll({ where: { id: { [Op.in]: authorIds } }, attributes: ["id", "displayName"], transaction }) : [];
  return rows.map((r) => ({
    id: r.id,
    armId: r.armId,
    revision: r.revision,
    model: armModelSchema.parse(r.model),
    readyPose: r.readyPose,
    note: r.note,
    createdBy: r.createdBy,
    createdByName: authors.find((a) => a.id === r.createdBy)?.displayName ?? null,
    createdAt: r.createdAt.toISOString(),
    versionCount: Number(counts.find((c) => Number(c.armRevisionId) === r.id)?.n ?? 0),
    tools: tools.filter((t) => t.armRevisionId === r.id).map((t) => t.toApi()),
  }));
}

/** `GET /api/arms/:id`: the arm as today with every revision (null when there is no such arm). */
export async function findArmDetail(db: Sequelize, armId: number): Promise<ArmDetail | null> {
  const arm = await findArm(db, armId);
  if (!arm) return null;
  const revisions = await listRevisions(db, armId);
  return { arm: { ...arm, latestRevisionId: revisions[0]!.id, revision: revisions[0]!.revision }, revisions };
}

export interface VersionArmChoice {
  armRevisionId: number;
  toolId: number | null;
}

/** The arm of a version as it was saved: its revision's model with its tool, and the references. */
export type ArmOfVersion = Arm & { armRevisionId: number; revision: number; tool: Tool | null };

/**
 * The revision and tool a version names (null for a version saved before it had one: none after migration
 * 0018, which bound every version).
 */
export async function findVersionArmChoice(db: Sequelize, versionId: number, transaction?: Transaction): Promise<VersionArmChoice | null> {
  const row = await modelsOf(db).VersionArm.findByPk(versionId, { transaction });
  return row ? { armRevisionId: row.armRevisionId, toolId: row.toolId } : null;
}

/** How the API names what a version drives: its revision (id and number) and its tool (id and name, null: none). */
export interface VersionArmRef {
  armRevisionId: number;
  armRevision: number;
  toolId: number | null;
  toolName: string | null;
}

/**
 * The revision and tool each of these versions names, by version id (three queries however many versions);
 * a version without a binding row is absent.
 */
export async function listVersionArmRefs(db: Sequelize, versionIds: readonly number[], transaction?: Transaction): Promise<Map<number, VersionArmRef>> {
  const out = new Map<number, VersionArmRef>();
  if (versionIds.length === 0) return out;
  const { ArmRevision, ArmTool, VersionArm } = modelsOf(db);
  const bindings = await VersionArm.findAll({ where: { versionId: { [Op.in]: [...versionIds] } }, transaction });
  const revisionIds = [...new Set(bindings.map((b) => b.armRevisionId))];
  const toolIds = [...new Set(bindings.map((b) => b.toolId).filter((id): id is number => id !== null))];
  const revisions = revisionIds.length ? await ArmRevision.findAll({ where: { id: { [Op.in]: revisionIds } }, attributes: ["id", "revision"], transaction }) : [];
  const tools = toolIds.length ? await ArmTool.findAll({ where: { id: { [Op.in]: toolIds } }, attributes: ["id", "name"], transaction }) : [];
  const revisionNumber = new Map(revisions.map((r) => [r.id, r.revision]));
  const toolName = new Map(tools.map((t) => [t.id, t.name]));
  for (const b of bindings) {
    out.set(b.versionId, {
      armRevisionId: b.armRevisionId,
      armRevision: revisionNumber.get(b.armRevisionId)!,
      toolId: b.toolId,
      toolName: b.toolId === null ? null : (toolName.get(b.toolId) ?? null),
    });
  }
  return out;
}

/** An arm at one revision with one tool (or the revision's own tool transform when `toolId` is null). */
export async function findArmAtRevision(db: Sequelize, choice: VersionArmChoice, transaction?: Transaction): Promise<ArmOfVersion | null> {
  const { Arm, ArmRevision, ArmTool } = modelsOf(db);
  const revision = await ArmRevision.findByPk(choice.armRevisionId, { transaction });
  if (!revision) return null;
  const arm = (await Arm.findByPk(revision.armId, { transaction }))!.toApi();
  const tool = choice.toolId === null ? null : ((await ArmTool.findByPk(choice.toolId, { transaction }))?.toApi() ?? null);
  return {
    ...arm,
    model: modelWithTool(armModelSchema.parse(revision.model), tool),
    readyPose: revision.readyPose,
    armRevisionId: revision.id,
    revision: revision.revision,
    tool,
  };
}

/**
 * The arm a profile version drives, checks and runs on: the revision and tool it was saved on. `armId` is
 * the profile's arm, used only when the version has no binding row.
 */
export async function findArmForVersion(db: Sequelize, versionId: number, armId: number, transaction?: Transaction): Promise<ArmOfVersion | null> {
  const choice = (await findVersionArmChoice(db, versionId, transaction)) ?? (await defaultArmChoice(db, armId, transaction));
  return choice ? findArmAtRevision(db, choice, transaction) : null;
}

/** The latest revision of an arm and its first tool in service: what a new profile is made on. */
export async function defaultArmChoice(db: Sequelize, armId: number, transaction?: Transaction): Promise<VersionArmChoice | null> {
  const latest = await latestRevisionRow(db, armId, transaction);
  if (!latest) return null;
  const tool = await modelsOf(db).ArmTool.findOne({ where: { armRevisionId: latest.id, retiredAt: null }, order: [["id", "ASC"]], transaction });
  return { armRevisionId: latest.id, toolId: tool?.id ?? null };
}

/**
 * Checks a requested revision and tool for a profile on arm `armId`: the revision must be one of that
 * arm's, the tool one of that revision's and not retired. 400 on the field otherwise. A tool left out
 * (undefined) is the revision's first tool in service; null is "no tool record" (the revision's own).
 */
export async function resolveArmChoice(
  db: Sequelize,
  armId: number,
  requested: { armRevisionId: number; toolId?: number | null },
  transaction?: Transaction,
): Promise<VersionArmChoice> {
  const { ArmRevision, ArmTool } = modelsOf(db);
  const revision = await ArmRevision.findByPk(requested.armRevisionId, { transaction });
  if (!revision || revision.armId !== armId) {
    throw new AppError(400, "validation_failed", "That arm revision is not one of the profile's arm.", [{ path: "armRevisionId", message: "pick a revision of the profile's arm" }]);
  }
  if (requested.toolId === null) return { armRevisionId: revision.id, toolId: null };
  if (requested.toolId === undefined) return (await defaultToolChoice(db, revision.id, transaction));
  const tool = await ArmTool.findByPk(requested.toolId, { transaction });
  if (!tool || tool.armRevisionId !== revision.id || tool.retiredAt) {
    throw new AppError(400, "validation_failed", "That tool is not one in service on this arm revision.", [{ path: "toolId", message: "pick a tool of the arm revision" }]);
  }
  return { armRevisionId: revision.id, toolId: tool.id };
}

async function defaultToolChoice(db: Sequelize, armRevisionId: number, transaction?: Transaction): Promise<VersionArmChoice> {
  const tool = await modelsOf(db).ArmTool.findOne({ where: { armRevisionId, retiredAt: null }, order: [["id", "ASC"]], transaction });
  return { armRevisionId, toolId: tool?.id ?? null };
}

/** Records the revision and tool a new version is saved on (in the version's transaction; never changed). */
export async function bindVersionToArm(db: Sequelize, transaction: Transaction, versionId: number, choice: VersionArmChoice): Promise<void> {
  await modelsOf(db).VersionArm.create({ versionId, armRevisionId: choice.armRevisionId, toolId: choice.toolId }, { transaction });
}

// ---------------------------------------------------------------------------------------------------
// Revisions and tools: writing
// ---------------------------------------------------------------------------------------------------

async function insertRevision(
  db: Sequelize,
  transaction: Transaction | undefined,
  armId: number,
  r: { model: ArmModel; readyPose: number[]; note: string; createdBy: string | null },
): Promise<ArmRevisionModel> {
  const latest = await latestRevisionRow(db, armId, transaction);
  return modelsOf(db).ArmRevision.create({ armId, revision: (latest?.revision ?? 0) + 1, ...r }, { transaction });
}

async function insertTool(db: Sequelize, transaction: Transaction | undefined, armRevisionId: number, tool: ToolInput, createdBy: string | null): Promise<Tool> {
  const row = await modelsOf(db).ArmTool.create({ armRevisionId, ...tool, note: tool.note ?? "", createdBy, retiredAt: null }, { transaction });
  return (await row.reload({ transaction })).toApi();
}

function checkTransforms(model: ArmModel): void {
  for (const key of ["base", "tool"] as const) {
    const m = model[key];
    const problem = m && rigidTransformProblem(m);
    if (problem) throw new AppError(400, "validation_failed", `The ${key} is not a rigid transform: ${problem}.`, [{ path: `model.${key}`, message: problem }]);
  }
}

function slugOf(name: string): string {
  const base = name.toLowerCase().normalize("NFKD").replace(/[^a-z0-9]+/g, "-").replace(/^-|-$/g, "").slice(0, 45) || "arm";
  return `${base}-${randomBytes(4).toString("hex")}`;
}

/** `POST /api/arms`: a new arm, its revision 1 and (when the model has one) its tool, audited. */
export async function createArm(db: Sequelize, actor: User, input: CreateArmInput): Promise<ArmDetail> {
  checkTransforms(input.model);
  const readyPose = input.readyPose ?? input.model.joints.map(() => 0);
  const armId = await db.transaction(async (t) => {
    const arm = await modelsOf(db).Arm.create({ slug: slugOf(input.name), name: input.name, description: input.description, model: input.model, readyPose }, { transaction: t });
    const revision = await insertRevision(db, t, arm.id, { model: input.model, readyPose, note: input.note || "First revision.", createdBy: actor.id });
    if (input.model.tool) await insertTool(db, t, revision.id, { name: "Flange tool", ...toolPoseOf(input.model.tool), massKg: 0, note: "From the arm's tool transform." }, actor.id);
    await recordAudit(db, t, {
      actorId: actor.id,
      entity: "arm",
      entityId: arm.id,
      action: "create",
      summary: `created arm "${input.name}" (${input.model.joints.length} joints, ${input.model.convention} DH), revision 1`,
      after: { name: input.name, description: input.description, model: input.model, readyPose },
    });
    return arm.id;
  });
  return (await findArmDetail(db, armId))!;
}

/**
 * `PUT /api/arms/:id`: a new revision on top of the latest (409 stale_parent when `parentRevisionId` is
 * not the latest), with copies of the latest revision's tools in service; name and description change in
 * place. Versions keep the revision they were saved on.
 */
export async function editArm(db: Sequelize, actor: User, armId: number, input: EditArmInput): Promise<ArmDetail> {
  checkTransforms(input.model);
  await db.transaction(async (t) => {
    const { Arm, ArmTool } = modelsOf(db);
    const arm = await Arm.findByPk(armId, { lock: t.LOCK.UPDATE, transaction: t });
    if (!arm) throw new AppError(404, "not_found", "No such arm.");
    const latest = (await latestRevisionRow(db, armId, t))!;
    if (latest.id !== input.parentRevisionId) {
      throw new AppError(409, "stale_parent", `Revision ${latest.revision} of "${arm.name}" was saved since you opened the revision you edited; nothing was saved. Reload and edit again.`, [
        { path: "parentRevisionId", message: `the latest revision is now ${latest.revision} (id ${latest.id})` },
      ]);
    }
    const readyPose = input.readyPose ?? (input.model.joints.length === latest.readyPose.length ? latest.readyPose : input.model.joints.map(() => 0));
    const before = { name: arm.name, description: arm.description, model: arm.model, readyPose: arm.readyPose, revision: latest.revision };
    const revision = await insertRevision(db, t, armId, { model: input.model, readyPose, note: input.note, createdBy: actor.id });
    const tools = await ArmTool.findAll({ where: { armRevisionId: latest.id, retiredAt: null }, order: [["id", "ASC"]], transaction: t });
    for (const tool of tools) {
      await insertTool(db, t, revision.id, { name: tool.name, positionM: tool.positionM, rpyRad: tool.rpyRad, massKg: Number(tool.massKg), note: tool.note }, actor.id);
    }
    await arm.update({ name: input.name ?? arm.name, description: input.description ?? arm.description, model: input.model, readyPose }, { transaction: t });
    await recordAudit(db, t, {
      actorId: actor.id,
      entity: "arm",
      entityId: armId,
      action: "edit",
      summary: `saved revision ${revision.revision} of arm "${arm.name}": ${input.note}`,
      before,
      after: { name: arm.name, description: arm.description, model: input.model, readyPose, revision: revision.revision },
    });
  });
  return (await findArmDetail(db, armId))!;
}

async function revisionOrNotFound(db: Sequelize, armId: number, revisionId: number, transaction?: Transaction): Promise<ArmRevisionModel> {
  const revision = await modelsOf(db).ArmRevision.findByPk(revisionId, { transaction });
  if (!revision || revision.armId !== armId) throw new AppError(404, "not_found", "No such arm revision.");
  return revision;
}

/** `POST /api/arms/:id/revisions/:revisionId/tools`: a tool on one revision, audited (409 on a duplicate name). */
export async function addTool(db: Sequelize, actor: User, armId: number, revisionId: number, input: ToolInput): Promise<Tool> {
  return db.transaction(async (t) => {
    const revision = await revisionOrNotFound(db, armId, revisionId, t);
    await refuseDuplicateToolName(db, t, revisionId, input.name, null);
    const tool = await insertTool(db, t, revision.id, input, actor.id);
    await recordAudit(db, t, {
      actorId: actor.id,
      entity: "arm",
      entityId: armId,
      action: "create",
      summary: `added tool "${tool.name}" to revision ${revision.revision}`,
      after: tool,
    });
    return tool;
  });
}

async function refuseDuplicateToolName(db: Sequelize, t: Transaction, armRevisionId: number, name: string, exceptId: number | null): Promise<void> {
  const same = await modelsOf(db).ArmTool.findOne({ where: { armRevisionId, name }, transaction: t });
  if (same && same.id !== exceptId) throw new AppError(409, "conflict", `This arm revision already has a tool named "${name}".`, [{ path: "name", message: "already used on this revision" }]);
}

async function toolInUse(db: Sequelize, toolId: number, transaction: Transaction): Promise<number> {
  return modelsOf(db).VersionArm.count({ where: { toolId }, transaction });
}

/**
 * `PUT /api/arms/:id/tools/:toolId`: changes a tool no version names (409 otherwise: a version's tool is
 * never changed under it — add a new tool and save a new version), audited.
 */
export async function updateTool(db: Sequelize, actor: User, armId: number, toolId: number, input: ToolInput): Promise<Tool> {
  return db.transaction(async (t) => {
    const tool = await modelsOf(db).ArmTool.findByPk(toolId, { lock: t.LOCK.UPDATE, transaction: t });
    if (!tool) throw new AppError(404, "not_found", "No such tool.");
    await revisionOrNotFound(db, armId, tool.armRevisionId, t);
    const used = await toolInUse(db, toolId, t);
    if (used > 0) {
      throw new AppError(409, "conflict", `The tool "${tool.name}" is named by ${used} profile version${used === 1 ? "" : "s"}, so it is never changed: add a new tool instead.`);
    }
    await refuseDuplicateToolName(db, t, tool.armRevisionId, input.name, toolId);
    const before = tool.toApi();
    await tool.update({ ...input, note: input.note ?? "" }, { transaction: t });
    const after = (await tool.reload({ transaction: t })).toApi();
    await recordAudit(db, t, { actorId: actor.id, entity: "arm", entityId: armId, action: "update", summary: `changed tool "${after.name}"`, before, after });
    return after;
  });
}

/** `POST /api/arms/:id/tools/:toolId/retire`: out of service for new versions; versions that name it keep it. */
export async function retireTool(db: Sequelize, actor: User, armId: number, toolId: number): Promise<Tool> {
  return db.transaction(async (t) => {
    const tool = await modelsOf(db).ArmTool.findByPk(toolId, { lock: t.LOCK.UPDATE, transaction: t });
    if (!tool) throw new AppError(404, "not_found", "No such tool.");
    await revisionOrNotFound(db, armId, tool.armRevisionId, t);
    if (tool.retiredAt) throw new AppError(409, "conflict", `The tool "${tool.name}" is already retired.`);
    const before = tool.toApi();
    await tool.update({ retiredAt: new Date() }, { transaction: t });
    const after = (await tool.reload({ transaction: t })).toApi();
    await recordAudit(db, t, { actorId: actor.id, entity: "arm", entityId: armId, action: "retire", summary: `retired tool "${after.name}"`, before, after });
    return after;
  });
}
