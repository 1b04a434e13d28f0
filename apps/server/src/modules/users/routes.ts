import { createUserSchema, idParamSchema, updateUserSchema } from "@jogwright/shared";
import { ApiRouter, requireAccount } from "../../http/api-router.ts";
import { parseBody, parseParams } from "../../http/validate.ts";
import type { AppContext } from "../../context.ts";
import * as service from "./service.ts";

/** The operators a profile can be assigned to (engineers and safety officers pick from them). */
export function operatorsRouter(ctx: AppContext): ApiRouter {
  return new ApiRouter("/api/operators").add("get", "/", ["engineer", "safety_officer"], async (_req, res) => {
    res.json({ operators: await service.listOperators(ctx.db) });
  });
}

export function usersRouter(ctx: AppContext): ApiRouter {
  return new ApiRouter("/api/users")
    .add("get", "/", ["admin"], async (_req, res) => {
      res.json({ users: await service.listUsers(ctx.db) });
    })
    .add("post", "/", ["admin"], async (req, res) => {
      const input = parseBody(req, createUserSchema);
      res.status(201).json({ user: await service.createUser(ctx.db, input, requireAccount(res)) });
    })
    .add("patch", "/:id", ["admin"], async (req, res) => {
      const { id } = parseParams(req, idParamSchema);
      const input = parseBody(req, updateUserSchema);
      res.json({ user: await service.updateUser(ctx, requireAccount(res), id, input) });
    });
}
