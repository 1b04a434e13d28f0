import { createSequelize } from "../db/connection.ts";
import { migrate } from "../db/migrator.ts";
import { seedDemo } from "../db/seed.ts";

/** Migrate and seed the test database once before the API tests. */
export default async function setup(): Promise<void> {
  if (!process.env.DATABASE_URL) {
    throw new Error("DATABASE_URL is not set: run the API tests through `npm test`, which starts the test MariaDB.");
  }
  const db = createSequelize(process.env.DATABASE_URL);
  await migrate(db);
  await seedDemo(db);
  await db.close();
}
