import { UniqueConstraintError, type Sequelize, type Transaction } from "sequelize";
import type { ArmModel } from "@jogwright/kinematics";
import type {
  Arm, ArmTrials, Ceilings, CustomTrial, ProfileVersion, MapRequest, MapResponse, ProfileParams, RunDetail, RunRequest, SaveTrialRequest, SweepRequest, SweepResult, TrialDefinition, TrialRef, TrialRun, User,
} from "@jogwright/shared";
import { mapRequestSchema } from "@jogwright/shared";
import { modelsOf } from "../../db/models.ts";
import { AppError } from "../../errors.ts";
import { recordAudit } from "../audit/service.ts";
import { findArm, findArmForVersion } from "../arms/service.ts";
import { findRecording, holdRecordings, readFrames, settleRecording } from "../recordings/service.ts";
import { visibleProfile } from "../profiles/service.ts";
import { checkParamsFitArm, findVersion } from "../versions/service.ts";
import { builtinTrials, type BuiltinTrial, type BuiltinTrials } from "./builtin.ts";
import { checkTrial } from "./compile.ts";
import { runJob, type RunJobResult } from "./run-job.ts";
import { replayInputOf, ReplayFormatError, type ReplayInput } from "./replay.ts";
import { decodeSeries, seriesForDisplay } from "./series-codec.ts";
import { runSweep, shareSignal } from "./sweep.ts";
import { mapInPool, runInPool } from "./trial-pool.ts";

/**
 * The tuning bench's service (issue 10): an arm's trials (built-in ones generated from its geometry, and
 * engineers' saved ones), offline runs of them in the worker pool (stored with their series and metrics),
 * and singularity maps. Other modules import this file, never model.ts. Plain objects out.
 */

async function armOrNotFound(db: Sequelize, armId: number): Promise<Arm> {
  const arm = await findArm(db, armId);
  if (!arm) throw new AppError(404, "not_found", "No such arm.");
  return arm;
}

// ---------------------------------------------------------------------------------------------------
// Trials
// ---------------------------------------------------------------------------------------------------

export async function armTrials(db: Sequelize, armId: number): Promise<ArmTrials> {
  const arm = await armOrNotFound(db, armId);
  const generated = builtinTrials({ model: arm.model, readyPose: arm.readyPose });
  const custom = await modelsOf(db).Trial.scope("withCreator").findAll({ where: { armId }, order: [["name", "ASC"]] });
  return {
    armId,
    builtin: generated.trials.map((t) => ({ kind: t.kind, definition: t.definition })),
    notApplicable: generated.notApplicable,
    custom: custom.map((t) => t.toApi()),
  };
}

/** The trial's problems for the arm as a 400 whose issues name the field ("definition.segments.2.linear.0"). */
function checkOrRefuse(definition: TrialDefinition, arm: ArmModel): void {
  const issues = checkTrial(definition, arm);
  if (issues.length > 0) {
    throw new AppError(400, "validation_failed", `The trial cannot run: ${issues[0]!.message}.`, issues.map((i) => ({ path: `definition.${i.path}`, message: i.message })));
  }
}

const duplicateName = (name: string) =>
  new AppError(409, "conflict", `This arm already has a trial named "${name}".`, [{ path: "definition.name", message: "pick a name no other trial of this arm has" }]);

/** Validated in full (shape, the arm's joints and limits, every expression) before it is saved. */
export async function createCustomTrial(db: Sequelize, actor: User, input: SaveTrialRequest): Promise<CustomTrial> {
  const arm = await armOrNotFound(db, input.armId);
  checkOrRefuse(input.definition, arm.model);
  const { Trial } = modelsOf(db);
  try {
    const id = await db.transaction(async (transaction) => {
      const trial = await Trial.create({ armId: arm.id, name: input.definition.name, definition: input.definition, createdBy: actor.id }, { transaction });
      await recordAudit(db, transaction, {
        actorId: actor.id, entity: "trial", entityId: trial.id, action: "create",
        summary: `created the trial "${trial.name}" on ${arm.name}`, after: input.definition,
      });
      return trial.id;
    });
    return (await findCustomTrial(db, id))!;
  } catch (error) {
    if (error instanceof UniqueConstraintError) throw duplicateName(input.definition.name);
    throw error;
  }
}

export async function updateCustomTrial(db: Sequelize, actor: User, id: number, definition: TrialDefinition): Promise<CustomTrial> {
  const { Trial } = modelsOf(db);
  try {
    await db.transaction(async (transaction) => {
      const trial = await Trial.findByPk(id, { transaction, lock: transaction.LOCK.UPDATE });
      if (!trial) throw new AppError(404, "not_found", "No such trial.");
      const arm = await armOrNotFound(db, trial.armId);
      checkOrRefuse(definition, arm.model);
      const before = trial.definition;
      await trial.update({ name: definition.name, definition }, { transaction });
      await recordAudit(db, transaction, {
        actorId: actor.id, entity: "trial", entityId: id, action: "update", summary: `changed the trial "${definition.name}" on ${arm.name}`, before, after: definition,
      });
    });
  } catch (error) {
    if (error instanceof UniqueConstraintError) throw duplicateName(definition.name);
    throw error;
  }
  return (await findCustomTrial(db, id))!;
}

export async function findCustomTrial(db: Sequelize, id: number): Promise<CustomTrial | null> {
  const trial = await modelsOf(db).Trial.scope("withCreator").findByPk(id);
  return trial?.toApi() ?? null;
}

// ---------------------------------------------------------------------------------------------------
// Runs
// ---------------------------------------------------------------------------------------------------

interface ResolvedSource {
  arm: Arm;
  profileId: number;
  versionId: number | null;
  params: ProfileParams;
}

/** What a run request runs with: the version's parameters, or a visible profile's unsaved edits. */
async function resolveSource(db: Sequelize, actor: User, source: RunRequest["source"]): Promise<ResolvedSource> {
  if (source.kind === "version") {
    const version = await findVersion(db, source.versionId);
    if (!version) throw new AppError(404, "not_found", "No such version.");
    const profile = await visibleProfile(db, actor, version.profileId);
    const arm = await findArmForVersion(db, version.id, profile.armId); // the revision and tool it was saved on
    if (!arm) throw new AppError(404, "not_found", "No such arm.");
    return { arm, profileId: profile.id, versionId: version.id, params: version.params };
  }
  const profile = await visibleProfile(db, actor, source.profileId);
  const arm = await armOrNotFound(db, profile.armId);
  checkParamsFitArm(source.params, arm, "source.params");
  return { arm, profileId: profile.id, versionId: null, params: source.params };
}

interface ResolvedTrial {
  kind: TrialRun["trialKind"];
  name: string;
  trialId: number | null;
  recordingId: number | null;
  /** A scripted trial's definition; null for a replay. */
  definition: TrialDefinition | null;
  replay: { input: ReplayInput; readyPose: readonly number[] } | null;
}

/** A recorded live session on the arm, its operator input ready to replay; 400 on the field when it cannot be. */
async function resolveReplay(db: Sequelize, arm: Arm, recordingId: number, index: number): Promise<ResolvedTrial> {
  const refuse = (message: string) => new AppError(400, "validation_failed", `Recording ${recordingId} cannot be replayed: ${message}.`, [{ path: `trials.${index}.recordingId`, message }]);
  await settleRecording(db, recordingId); // a session that just ended replays whole
  const recording = await findRecording(db, recordingId);
  if (!recording) throw refuse("there is no such recording");
  if (recording.armId !== arm.id) throw refuse(`it was driven on another arm (${recording.armName})`);
  if (recording.summary?.droppedFrames) throw refuse(`${recording.summary.droppedFrames} of its frames were dropped while the database was behind, so its input is incomplete`);
  const version = await findVersion(db, recording.versionId);
  try {
    const input = replayInputOf(await readFrames(db, recordingId), version!.params.tickRateHz);
    const day = recording.startedAt.slice(0, 16).replace("T", " ");
    return {
      kind: "replay", name: `Replay of ${recording.driverName}'s session of ${day} UTC (v${recording.versionNumber})`, trialId: null, recordingId,
      definition: null, replay: { input, readyPose: arm.readyPose },
    };
  } catch (error) {
    if (error instanceof ReplayFormatError) throw refuse(error.message);
    throw error;
  }
}

const builtinResolved = (t: BuiltinTrial): ResolvedTrial => ({
  kind: t.kind, name: t.definition.name, trialId: null, recordingId: null, definition: t.definition, replay: null,
});

/**
 * The request's trials, in order, each ready to run; 400 on the field of the first that cannot be. The
 * arm's built-in trials are generated once for the whole list.
 */
async function resolveTrials(db: Sequelize, arm: Arm, refs: readonly TrialRef[]): Promise<ResolvedTrial[]> {
  let generated: BuiltinTrials | null = null;
  const builtins = () => (generated ??= builtinTrials({ model: arm.model, readyPose: arm.readyPose }));
  return Promise.all(
    refs.map(async (ref, index): Promise<ResolvedTrial> => {
      if (ref.kind === "replay") return resolveReplay(db, arm, ref.recordingId, index);
      if (ref.kind === "builtin") {
        const trial = builtins().trials.find((t) => t.kind === ref.builtin);
        if (!trial) {
          const reason = builtins().notApplicable.find((t) => t.kind === ref.builtin)?.reason ?? "not generated for this arm";
          throw new AppError(400, "validation_failed", `The built-in trial "${ref.builtin}" does not apply to ${arm.name}: ${reason}.`, [{ path: `trials.${index}.builtin`, message: reason }]);
        }
        return builtinResolved(trial);
      }
      const trial = await findCustomTrial(db, ref.trialId);
      if (!trial || trial.armId !== arm.id) {
        throw new AppError(400, "validation_failed", "No such trial for this arm.", [{ path: `trials.${index}.trialId`, message: "pick a saved trial of this profile's arm" }]);
      }
      return { kind: "custom", name: trial.name, trialId: trial.id, recordingId: null, definition: trial.definition, replay: null };
    }),
  );
}

/**
 * Runs each trial once with the source's parameters, in the worker pool (in parallel, up to its size), and
 * stores every run with its series and metrics. All trials are resolved before anything runs; a run that
 * fails stores nothing of the request (the runs are written in one transaction at the end).
 */
export async function runTrials(
  db: Sequelize, actor: User, request: RunRequest, signal?: AbortSignal, run: typeof runInPool = runInPool,
): Promise<TrialRun[]> {
  const source = await resolveSource(db, actor, request.source);
  return runResolved(db, actor, source, await resolveTrials(db, source.arm, request.trials), signal, run);
}

/** `run`: where each run is computed (the pool; a test puts a retention pass before it). */
async function runResolved(
  db: Sequelize, actor: User, source: ResolvedSource, trials: ResolvedTrial[], signal?: AbortSignal, run: typeof runInPool = runInPool,
): Promise<TrialRun[]> {
  shareSignal(signal, trials.length);
  const results = await Promise.all(
    trials.map((t) => {
      const common = { arm: source.arm.model, params: source.params, output: "stored" as const };
      return run(t.replay ? { ...common, replay: t.replay } : { ...common, trial: t.definition! }, signal);
    }),
  );
  const ids = await db.transaction((transaction) => storeRuns(db, transaction, source, trials, results, actor.id));
  return listRunsById(db, ids);
}

/** Stores finished runs (their series compressed and hashed by the run itself: output "stored", run-job.ts) in `transaction`; their ids in order. */
async function storeRuns(db: Sequelize, transaction: Transaction, source: ResolvedSource, trials: ResolvedTrial[], results: RunJobResult[], actorId: string): Promise<number[]> {
  const { TrialRun } = modelsOf(db);
  // A replayed recording may have been pruned by the retention setting while its run was computed (it was
  // read, unreferenced, before the run): then nothing is stored, and the engineer is told why.
  const replayed = [...new Set(trials.flatMap((t) => (t.recordingId === null ? [] : [t.recordingId])))];
  const held = await holdRecordings(db, transaction, replayed);
  const gone = replayed.filter((id) => !held.includes(id));
  if (gone.length > 0) {
    const which = gone.length === 1 ? `Recording ${gone[0]} was` : `Recordings ${gone.join(", ")} were`;
    throw new AppError(409, "conflict", `${which} removed by the recording retention setting while the runs were computed, so nothing was stored. Run the trials again without it.`);
  }
  const out: number[] = [];
  for (const [i, t] of trials.entries()) {
    const r = results[i]!;
    const { bytes, hash } = r.stored!;
    const run = await TrialRun.create(
      {
        armId: source.arm.id, profileId: source.profileId, versionId: source.versionId, params: source.params,
        trialKind: t.kind, trialId: t.trialId, recordingId: t.recordingId, trialName: t.name, trialDefinition: t.definition,
        metrics: r.metrics, series: Buffer.from(bytes.buffer, bytes.byteOffset, bytes.byteLength), seriesHash: hash, durationMs: Math.round(r.elapsedMs), createdBy: actorId,
      },
      { transaction },
    );
    out.push(run.id);
  }
  return out;
}

/**
 * The demo seed's evidence: every built-in trial of the arm run with a version that is still a draft in
 * `transaction` (not yet committed), the runs stored and attached in that same transaction, before the
 * seed submits it — so a seeded submitted or approved version carries evidence as a real one does.
 */
export async function attachBuiltinEvidence(
  db: Sequelize, transaction: Transaction, version: { id: number; profileId: number; params: ProfileParams }, arm: Arm, actorId: string,
): Promise<number[]> {
  const source: ResolvedSource = { arm, profileId: version.profileId, versionId: version.id, params: version.params };
  const trials = builtinTrials({ model: arm.model, readyPose: arm.readyPose }).trials.map(builtinResolved);
  // On this thread, not the pool: the seed runs before the server listens, and a pool's first threads
  // take longer to start (their TypeScript loader) than these runs take (measured: ~0.6 s for 7 trials).
  const results = trials.map((t) => runJob({ arm: arm.model, params: version.params, trial: t.definition!, output: "stored" }));
  const ids = await storeRuns(db, transaction, source, trials, results, actorId);
  await attachEvidence(db, transaction, version.id, ids, actorId);
  return ids;
}

async function listRunsById(db: Sequelize, ids: number[]): Promise<TrialRun[]> {
  const runs = await modelsOf(db).TrialRun.scope(["defaultScope", "withNames"]).findAll({ where: { id: ids }, order: [["id", "ASC"]] });
  return runs.map((r) => r.toApi());
}

/** Runs of a version (or of a profile, edits included), newest first. */
export async function listRuns(db: Sequelize, actor: User, filter: { versionId?: number | undefined; profileId?: number | undefined }, limit = 200): Promise<TrialRun[]> {
  let profileId = filter.profileId;
  if (filter.versionId !== undefined) {
    const version = await findVersion(db, filter.versionId);
    if (!version) throw new AppError(404, "not_found", "No such version.");
    profileId = version.profileId;
  }
  if (profileId === undefined) throw new AppError(400, "validation_failed", "Name a version or a profile.", [{ path: "versionId", message: "give versionId or profileId" }]);
  await visibleProfile(db, actor, profileId);
  const where = filter.versionId !== undefined ? { versionId: filter.versionId } : { profileId };
  const runs = await modelsOf(db).TrialRun.scope(["defaultScope", "withNames"]).findAll({ where, order: [["id", "DESC"]], limit });
  return runs.map((r) => r.toApi());
}

/** One run with its series for display (downsampled to a few thousand samples). */
export async function getRun(db: Sequelize, actor: User, id: number): Promise<RunDetail> {
  const run = await modelsOf(db).TrialRun.scope("withNames").findByPk(id);
  if (!run) throw new AppError(404, "not_found", "No such run.");
  await visibleProfile(db, actor, run.profileId);
  return { run: run.toApi(), series: seriesForDisplay(decodeSeries(run.series)) };
}

// ---------------------------------------------------------------------------------------------------
// Sweeps
// ---------------------------------------------------------------------------------------------------

/**
 * A sweep of one or two parameters around a version, over chosen trials, in the worker pool. Progress
 * through `onProgress`; `signal` cancels it (queued runs are dropped, running ones end with their worker).
 * Nothing is stored: a picked point becomes a draft through the ordinary save (the console sets the
 * values with `withSweepParameter`).
 */
export async function sweepVersion(
  db: Sequelize, actor: User, request: SweepRequest, onProgress: (done: number, total: number) => void, signal?: AbortSignal,
): Promise<SweepResult> {
  const source = await resolveSource(db, actor, { kind: "version", versionId: request.versionId });
  const refs: TrialRef[] = [...request.builtins.map((builtin) => ({ kind: "builtin" as const, builtin })), ...request.trialIds.map((trialId) => ({ kind: "custom" as const, trialId }))];
  const trials = await resolveTrials(db, source.arm, refs);
  const started = performance.now();
  const result = await runSweep(
    { arm: source.arm.model, base: source.params, axes: request.axes, trials: trials.map((t) => t.definition!), x: request.x, y: request.y },
    runInPool, onProgress, signal,
  );
  return { ...result, versionId: source.versionId!, trialNames: trials.map((t) => t.name), elapsedMs: performance.now() - started };
}

// ---------------------------------------------------------------------------------------------------
// Singularity maps
// ---------------------------------------------------------------------------------------------------

/** The arm with a tool of `lengthM` along the flange's z axis instead of its own (null keeps its own). */
export function withToolLength(model: ArmModel, lengthM: number | null): ArmModel {
  if (lengthM === null) return model;
  return { ...model, tool: [1, 0, 0, 0, 0, 1, 0, 0, 0, 0, 1, lengthM, 0, 0, 0, 1] };
}

export async function singularityMap(db: Sequelize, input: MapRequest): Promise<MapResponse> {
  const req = mapRequestSchema.parse(input);
  const arm = await armOrNotFound(db, req.armId);
  const n = arm.model.joints.length;
  const pose = req.pose ?? arm.readyPose;
  if (pose.length !== n) throw new AppError(400, "validation_failed", `The pose needs ${n} joint positions.`, [{ path: "pose", message: `${n} values` }]);
  const model = withToolLength(arm.model, req.toolLengthM);
  const started = performance.now();
  if (req.kind === "joints") {
    if (n < 6 && (req.xJoint === null || req.yJoint === null)) {
      throw new AppError(400, "validation_failed", "Choose the two joints to map.", [{ path: "xJoint", message: "this arm has no wrist q4/q5 to default to" }]);
    }
    const xJoint = req.xJoint ?? n - 3;
    const yJoint = req.yJoint ?? n - 2;
    for (const [path, j] of [["xJoint", xJoint], ["yJoint", yJoint]] as const) {
      if (j >= n) throw new AppError(400, "validation_failed", `The arm has ${n} joints.`, [{ path, message: `a joint from 0 to ${n - 1}` }]);
    }
    if (xJoint === yJoint) throw new AppError(400, "validation_failed", "Map two different joints.", [{ path: "yJoint", message: "differs from xJoint" }]);
    const grid = await mapInPool({ kind: "joints", arm: model, request: { measure: req.measure, pose, xJoint, yJoint, resolution: req.resolution } });
    return toResponse("joints", grid, `q${xJoint + 1}`, `q${yJoint + 1}`, req.toolLengthM, performance.now() - started);
  }
  const grid = await mapInPool({ kind: "cartesian", arm: model, request: { measure: req.measure, pose, plane: req.plane, halfWidthM: req.halfWidthM, resolution: req.resolution } });
  return toResponse("cartesian", grid, req.plane[0]!, req.plane[1]!, req.toolLengthM, performance.now() - started);
}

function toResponse(
  kind: MapResponse["kind"], grid: { values: Float64Array; xs: Float64Array; ys: Float64Array; measure: MapResponse["measure"] },
  xLabel: string, yLabel: string, toolLengthM: number | null, computeMs: number,
): MapResponse {
  return {
    kind, measure: grid.measure, xLabel, yLabel, xs: Array.from(grid.xs), ys: Array.from(grid.ys),
    // JSON has no NaN or Infinity: an unreachable point (or an exactly singular condition number) is null.
    values: Array.from(grid.values, (v) => (Number.isFinite(v) ? v : null)),
    toolLengthM, computeMs,
  };
}

// ---------------------------------------------------------------------------------------------------
// Evidence (a version is submitted with its runs; the site's rule: ceilings.evidenceRequired)
// ---------------------------------------------------------------------------------------------------

/** Why a run breaks the site's evidence rule, or null. A stop-before hold is the profile's own answer. */
export function evidenceProblem(run: TrialRun, ceilings: Ceilings): string | null {
  const m = run.metrics;
  if (m.stallKind === "fault" || m.stallKind === "lag") return `“${run.trialName}” stalled: ${m.stalledReason}`;
  const limit = ceilings.stoppingDistanceMaxM;
  const worst = Math.max(m.stopping.worstPredictedDistanceM, m.stopping.finalStopDistanceM);
  if (worst > limit + 1e-9) {
    return `“${run.trialName}” stops up to ${(worst * 1000).toFixed(1)} mm, above the site's ${(limit * 1000).toFixed(1)} mm stopping-distance ceiling`;
  }
  return null;
}

/**
 * The runs a draft is submitted with: the engineer's chosen runs of this very version, plus — when the
 * site requires the built-in trials — a fresh run of each built-in trial of its arm that is not among
 * them. Refused (409 evidence_insufficient, one issue per run) when a required run breaks the rule. Runs
 * outside a transaction (offline runs take a moment); attachEvidence stores the list with the submission.
 */
export async function prepareEvidence(db: Sequelize, actor: User, version: ProfileVersion, chosenRunIds: number[], ceilings: Ceilings): Promise<number[]> {
  const chosen = chosenRunIds.length ? await listRunsById(db, [...new Set(chosenRunIds)]) : [];
  chosenRunIds.forEach((runId, i) => {
    const run = chosen.find((r) => r.id === runId);
    if (!run || run.versionId !== version.id) {
      throw new AppError(400, "validation_failed", `Run ${runId} is not a run of this version; attach runs of v${version.number} only.`, [
        { path: `evidenceRunIds.${i}`, message: "a run of this version" },
      ]);
    }
  });
  if (ceilings.evidenceRequired === "none") return chosen.map((r) => r.id);

  const source = await resolveSource(db, actor, { kind: "version", versionId: version.id });
  const builtins = builtinTrials({ model: source.arm.model, readyPose: source.arm.readyPose }).trials;
  const kinds = builtins.map((t) => t.kind);
  const missing = builtins.filter((t) => !chosen.some((r) => r.trialKind === t.kind)).map(builtinResolved);
  const fresh = missing.length ? await runResolved(db, actor, source, missing) : [];
  const required = [...chosen.filter((r) => (kinds as string[]).includes(r.trialKind)), ...fresh];
  const problems = required.map((r) => ({ run: r, problem: evidenceProblem(r, ceilings) })).filter((p) => p.problem !== null);
  if (problems.length > 0) {
    throw new AppError(
      409,
      "evidence_insufficient",
      `v${version.number} does not meet the site's evidence rule (the built-in trials, all finished, none above a ceiling): ${problems[0]!.problem}. Nothing was submitted; the runs are kept on the bench.`,
      problems.map((p) => ({ path: `runs.${p.run.id}`, message: p.problem! })),
    );
  }
  return [...chosen.map((r) => r.id), ...fresh.map((r) => r.id)];
}

/** Attach runs to a draft in the submission's transaction (the database refuses it once it left draft). */
export async function attachEvidence(db: Sequelize, transaction: Transaction, versionId: number, runIds: number[], actorId: string): Promise<void> {
  if (runIds.length === 0) return;
  await modelsOf(db).VersionEvidence.bulkCreate(runIds.map((runId) => ({ versionId, runId, attachedBy: actorId })), { transaction });
}

/** The runs a version was submitted with, in the order they ran. */
export async function evidenceOf(db: Sequelize, versionId: number): Promise<TrialRun[]> {
  const rows = await modelsOf(db).VersionEvidence.findAll({ where: { versionId }, attributes: ["runId"], raw: true });
  return rows.length ? listRunsById(db, rows.map((r) => r.runId)) : [];
}
