import type { Sequelize } from "sequelize";
import type { AppLucia } from "./auth/lucia.ts";
import type { Config } from "./config.ts";
import type { SignInLimiter } from "./auth/sign-in-limiter.ts";
import type { Mailer } from "./mail/mailer.ts";
import type { Scale } from "./scale/redis.ts";

/**
 * What every module gets: the database, the session store, the settings, the outgoing mail. The models
 * of `db` are `modelsOf(db)` (db/models.ts), kept per Sequelize instance.
 */
export interface AppContext {
  db: Sequelize;
  lucia: AppLucia;
  config: Config;
  signInLimiter: SignInLimiter;
  mailer: Mailer;
  /** The shared Redis of a scaled-out site (REDIS_URL); null for a single instance (the default). */
  scale: Scale | null;
}
