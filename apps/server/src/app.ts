import express, { type Express, type Router } from "express";
import path from "node:path";
import { existsSync } from "node:fs";
import type { Sequelize } from "sequelize";
import { createLucia } from "./auth/lucia.ts";
import { originCheck, sessionLoader } from "./auth/middleware.ts";
import { authRouter } from "./auth/routes.ts";
import { SignInLimiter } from "./auth/sign-in-limiter.ts";
import type { Config } from "./config.ts";
import type { AppContext } from "./context.ts";
import { AppError, errorHandler, notFoundHandler } from "./errors.ts";
import type { ApiRouter, RouteSpec } from "./http/api-router.ts";
import { securityHeaders } from "./http/security-headers.ts";
import { armsRouter } from "./modules/arms/routes.ts";
import { healthRouter } from "./modules/health/routes.ts";
import { operatorsRouter, usersRouter } from "./modules/users/routes.ts";
import { auditRouter } from "./modules/audit/routes.ts";
import { ceilingsRouters } from "./modules/ceilings/routes.ts";
import { mailRouter } from "./modules/mail/routes.ts";
import { profilesRouter } from "./modules/profiles/routes.ts";
import { versionsRouters } from "./modules/versions/routes.ts";
import { versionFilesRouters } from "./modules/version-files/routes.ts";
import { reviewsRouters } from "./modules/reviews/routes.ts";
import { drivingRouter } from "./modules/driving/routes.ts";
import { Mailer } from "./mail/mailer.ts";
import { jogRouter } from "./modules/jog/routes.ts";
import { recordingsRouter } from "./modules/recordings/routes.ts";
import { benchRouter } from "./modules/trials/routes.ts";
import { configureTrialPool } from "./modules/trials/trial-pool.ts";
import { useTrialQueue } from "./modules/trials/trial-queue.ts";
import { createScale } from "./scale/redis.ts";
import { gamepadRouter } from "./modules/gamepad/routes.ts";

export interface BuiltApp {
  app: Express;
  ctx: AppContext;
  /** Every API route with its access rule (the role matrix test walks this). */
  routes: RouteSpec[];
  /** The router every /api request goes through, so a test can list what Express really registered. */
  api: Router;
}

export function createApp(config: Config, db: Sequelize): BuiltApp {
  const mailer = new Mailer(db, { host: config.mail.smtpHost, port: config.mail.smtpPort, from: config.mail.from });
  const scale = createScale(config.redis);
  const ctx: AppContext = { db, config, lucia: createLucia(db), signInLimiter: new SignInLimiter(config.signIn, scale), mailer, scale };
  configureTrialPool(config.trialPoolThreads);
  if (scale) useTrialQueue(scale, config.redis!.trialQueueConcurrency);
  const app = express();
  app.disable("x-powered-by");
  app.set("trust proxy", config.trustProxy ? 1 : false);
  app.use(securityHeaders(config));

  const api = express.Router();
  api.use(express.json({ limit: "256kb", strict: true }));
  api.use((req, _res, next) => {
    // JSON only: a body of another type is refused rather than silently ignored.
    // The one exception: an arm file upload (multipart, read by multer in modules/arms/routes.ts).
    const isArmUpload = req.method === "POST" && req.path === "/api/arms/upload" && req.is("multipart/form-data");
    if (req.headers["content-length"] && req.headers["content-length"] !== "0" && !req.is("application/json") && !isArmUpload) {
      next(new AppError(415, "bad_request", "Send JSON with Content-Type: application/json."));
      return;
    }
    next();
  });
  api.use(originCheck(ctx));
  api.use(sessionLoader(ctx));
  const routers: ApiRouter[] = [
    healthRouter(ctx),
    authRouter(ctx),
    usersRouter(ctx),
    armsRouter(ctx),
    operatorsRouter(ctx),
    profilesRouter(ctx),
    ...versionsRouters(ctx),
    ...versionFilesRouters(ctx),
    ...reviewsRouters(ctx),
    drivingRouter(ctx),
    ...ceilingsRouters(ctx),
    auditRouter(ctx),
    mailRouter(ctx),
    jogRouter(ctx),
    recordingsRouter(ctx),
    gamepadRouter(ctx),
    benchRouter(ctx),
  ];
  for (const r of routers) api.use(r.mountPath, r.router);
  api.use(notFoundHandler);
  api.use(errorHandler);
  app.use((req, res, next) => {
    if (req.path !== "/api" && !req.path.startsWith("/api/")) return next();
    res.set("Cache-Control", "no-store");
    api(req, res, next);
  });

  const dist = config.consoleDist ?? path.resolve(import.meta.dirname, "../../console/dist");
  if (existsSync(dist)) {
    // The build keeps its source maps on disk for reading stack traces (vite.config.ts, "hidden"); they
    // are never served, in any environment.
    app.use((req, res, next) => {
      if (!req.path.toLowerCase().endsWith(".map")) return next();
      res.status(404).type("text/plain").send("Not found");
    });
    app.use(express.static(dist, { index: false, maxAge: "1h" }));
    app.get("/{*splat}", (_req, res) => {
      res.set("Cache-Control", "no-cache");
      res.sendFile(path.join(dist, "index.html"));
    });
  }
  return { app, ctx, routes: routers.flatMap((r) => r.routes), api };
}
