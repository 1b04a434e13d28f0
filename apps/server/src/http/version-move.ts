import type { Request, Response } from "express";
import type { z } from "zod";
import { numericIdParamSchema, type ProfileVersion, type User } from "@jogwright/shared";
import type { AppContext } from "../context.ts";
import { accountChangesFor, type AccountChange } from "../modules/users/account-changes.ts";
import { requireAccount } from "./api-router.ts";
import { parseBody, parseParams } from "./validate.ts";

/**
 * The handler of a move of one version (POST /api/versions/:id/submit, approve, …): the id from the path,
 * the body checked with `schema` (no body at all reads as `{}` when `isBodyOptional`), and the version as
 * `act` leaves it, answered as `{ version }`. A move that can make a version no longer driveable (approve
 * supersedes the approved one, retire) names it in `drivingChange`: once it is committed, the jog sockets
 * that drive re-check their version at once (account-changes.ts).
 */
export function versionMove<S extends z.ZodType>(
  ctx: AppContext,
  schema: S,
  act: (ctx: AppContext, actor: User, versionId: number, input: z.infer<S>) => Promise<ProfileVersion>,
  { isBodyOptional = false, drivingChange }: { isBodyOptional?: boolean; drivingChange?: Extract<AccountChange, { kind: "versions" }>["why"] } = {},
) {
  return async (req: Request, res: Response) => {
    const { id } = parseParams(req, numericIdParamSchema);
    const input = isBodyOptional && req.body === undefined ? schema.parse({}) : parseBody(req, schema);
    const version = await act(ctx, requireAccount(res), id, input);
    if (drivingChange) accountChangesFor(ctx).publish({ kind: "versions", why: drivingChange });
    res.json({ version });
  };
}
