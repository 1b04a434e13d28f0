import { Router, type NextFunction, type Request, type RequestHandler, type Response } from "express";
import { hasAnyRole, ROLE_LABELS, type Role, type User } from "@jogwright/shared";
import { AppError } from "../errors.ts";

/** Who may call a route: anybody, any signed-in account, or accounts holding one of these roles. */
export type Access = "public" | "signed-in" | readonly Role[];
export type Method = "get" | "post" | "put" | "patch" | "delete";

export interface RouteSpec {
  method: Method;
  /** Full path under the app, e.g. /api/users/:id */
  path: string;
  access: Access;
}

export function currentAccount(res: Response): User | null {
  return (res.locals.account as User | undefined) ?? null;
}

export function requireAccount(res: Response): User {
  const account = currentAccount(res);
  if (!account) throw new AppError(401, "unauthenticated", "Sign in first.");
  return account;
}

function accessGuard(access: Access): RequestHandler {
  return (_req: Request, res: Response, next: NextFunction) => {
    if (access === "public") return next();
    const account = requireAccount(res);
    if (access !== "signed-in" && !hasAnyRole(account.roles, access)) {
      const needed = access.map((r) => ROLE_LABELS[r].toLowerCase()).join(" or ");
      throw new AppError(403, "forbidden", `This needs the ${needed} role.`);
    }
    next();
  };
}

/**
 * An Express router that records every route with its access rule, so the role matrix test can try
 * each one, and checks the rule on the server before the handler runs.
 */
export class ApiRouter {
  readonly router = Router();
  readonly routes: RouteSpec[] = [];

  constructor(readonly mountPath: string) {}

  add(method: Method, path: string, access: Access, handler: (req: Request, res: Response) => unknown): this {
    this.routes.push({ method, path: `${this.mountPath}${path === "/" ? "" : path}`, access });
    this.router[method](path, accessGuard(access), async (req, res) => {
      await handler(req, res);
    });
    return this;
  }
}
