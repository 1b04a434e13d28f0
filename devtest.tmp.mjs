// node devtest.tmp.mjs <files...> : server vitest files against the test MariaDB
import { spawnSync } from "node:child_process";
import path from "node:path";
import { databaseEnv, prepare, recreateDatabase, ROOT, startPrivateRedis } from "./scripts/lib/setup.mjs";
const db = await prepare({ withChromium: false, withRedis: true, dbName: "mariadb-test", defaultDbPort: 3408, database: "jogwright_test", throwaway: true });
recreateDatabase(db.socket, "jogwright_test");
const redis = await startPrivateRedis({ name: "redis-test", port: 6408 });
const r = spawnSync(path.join(ROOT, "apps/server/node_modules/.bin/vitest"), ["run", ...process.argv.slice(2)], { cwd: path.join(ROOT, "apps/server"), stdio: "inherit", env: { ...process.env, ...databaseEnv(db), NODE_ENV: "test", REDIS_TEST_URL: redis.url } });
await redis.stop();
await db.stop();
process.exit(r.status ?? 1);
