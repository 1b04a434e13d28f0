import type { Request, Response } from "express";
import multer from "multer";
import { z } from "zod";
import { armUploadFieldsSchema, createArmSchema, editArmSchema, numericIdParamSchema, toolInputSchema } from "@jogwright/shared";
import { AppError } from "../../errors.ts";
import { ApiRouter, requireAccount } from "../../http/api-router.ts";
import { parseBody, parseParams, parseQuery } from "../../http/validate.ts";
import type { AppContext } from "../../context.ts";
import { addTool, createArm, editArm, findArmDetail, listArms, retireTool, updateTool } from "./service.ts";
import { parseArmUpload, previewArm } from "./upload.ts";

/**
 * Arms: everyone signed in reads them (the drive page and the profiles show them); engineers create arms,
 * edit them (each edit a new revision), upload arm files and keep the tools.
 */
const ENGINEERS = ["engineer"] as const;

/** Arm files are small (12 joints at most): 1 MB is plenty and bounds the memory one request takes. */
export const ARM_UPLOAD_LIMIT_BYTES = 1024 * 1024;
const upload = multer({ storage: multer.memoryStorage(), limits: { fileSize: ARM_UPLOAD_LIMIT_BYTES, files: 1, fields: 10 } }).single("file");

/** multer as a promise, run inside the handler: after the access check, so nobody unsigned is buffered. */
function readUpload(req: Request, res: Response): Promise<void> {
  return new Promise((resolve, reject) => {
    upload(req, res, (error: unknown) => {
      if (!error) return resolve();
      if (error instanceof multer.MulterError) {
        const message = error.code === "LIMIT_FILE_SIZE" ? "The file is larger than 1 MB; an arm file is a few kilobytes." : `The upload was refused: ${error.message}.`;
        return reject(new AppError(error.code === "LIMIT_FILE_SIZE" ? 413 : 400, "bad_request", message));
      }
      reject(error instanceof Error ? error : new Error(String(error)));
    });
  });
}

const uploadQuerySchema = z.object({ save: z.enum(["0", "1"]).default("0") });
const armToolParamsSchema = z.object({ id: z.coerce.number().int().positive("not a valid id"), toolId: z.coerce.number().int().positive("not a valid id") });
const armRevisionParamsSchema = z.object({ id: z.coerce.number().int().positive("not a valid id"), revisionId: z.coerce.number().int().positive("not a valid id") });

export function armsRouter(ctx: AppContext): ApiRouter {
  return new ApiRouter("/api/arms")
    .add("get", "/", "signed-in", async (_req, res) => {
      res.json({ arms: await listArms(ctx.db) });
    })
    .add("get", "/:id", "signed-in", async (req, res) => {
      const { id } = parseParams(req, numericIdParamSchema);
      const detail = await findArmDetail(ctx.db, id);
      if (!detail) throw new AppError(404, "not_found", "No such arm.");
      res.json(detail);
    })
    .add("post", "/", ENGINEERS, async (req, res) => {
      const actor = requireAccount(res);
      res.status(201).json(await createArm(ctx.db, actor, parseBody(req, createArmSchema)));
    })
    .add("put", "/:id", ENGINEERS, async (req, res) => {
      const actor = requireAccount(res);
      const { id } = parseParams(req, numericIdParamSchema);
      res.json(await editArm(ctx.db, actor, id, parseBody(req, editArmSchema)));
    })
    /**
     * multipart/form-data with `file` (the arm JSON or a CSV DH table; told by its content) and, to save,
     * `name`, `description`, `note`. Without `?save=1`: 200 with the parsed arm and σ at the zero pose, nothing
     * saved. A file with any problem: 422 `validation_failed`, one issue per problem with its line and field
     * (path "line N: field"), nothing saved.
     */
    .add("post", "/upload", ENGINEERS, async (req, res) => {
      const actor = requireAccount(res);
      const { save } = parseQuery(req, uploadQuerySchema);
      await readUpload(req, res);
      if (!req.file) throw new AppError(400, "validation_failed", "Attach the arm file as the form field \"file\".", [{ path: "file", message: "no file" }]);
      const result = parseArmUpload(req.file.buffer);
      if (!result.ok) {
        throw new AppError(
          422,
          "validation_failed",
          `The arm file has ${result.issues.length} problem${result.issues.length === 1 ? "" : "s"}; nothing was saved.`,
          result.issues.map((i) => ({ path: i.line === null ? i.field : `line ${i.line}: ${i.field}`, message: i.message })),
        );
      }
      const preview = previewArm(result.format, result.model);
      if (save === "0") {
        res.json({ preview, issues: [] });
        return;
      }
      const fields = armUploadFieldsSchema.safeParse(req.body ?? {});
      if (!fields.success) {
        throw new AppError(400, "validation_failed", "Name the arm to save it.", fields.error.issues.map((i) => ({ path: i.path.join("."), message: i.message })));
      }
      const detail = await createArm(ctx.db, actor, { ...fields.data, model: result.model, note: fields.data.note || `Uploaded (${result.format}).` });
      res.status(201).json({ preview, ...detail });
    })
    .add("post", "/:id/revisions/:revisionId/tools", ENGINEERS, async (req, res) => {
      const actor = requireAccount(res);
      const { id, revisionId } = parseParams(req, armRevisionParamsSchema);
      res.status(201).json({ tool: await addTool(ctx.db, actor, id, revisionId, parseBody(req, toolInputSchema)) });
    })
    .add("put", "/:id/tools/:toolId", ENGINEERS, async (req, res) => {
      const actor = requireAccount(res);
      const { id, toolId } = parseParams(req, armToolParamsSchema);
      res.json({ tool: await updateTool(ctx.db, actor, id, toolId, parseBody(req, toolInputSchema)) });
    })
    .add("post", "/:id/tools/:toolId/retire", ENGINEERS, async (req, res) => {
      const actor = requireAccount(res);
      const { id, toolId } = parseParams(req, armToolParamsSchema);
      res.json({ tool: await retireTool(ctx.db, actor, id, toolId) });
    });
}
