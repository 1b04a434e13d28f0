import { SequelizeStorage, Umzug } from "umzug";
import type { Sequelize } from "sequelize";
import * as m0001 from "./migrations/0001-accounts.ts";
import * as m0002 from "./migrations/0002-arms.ts";

/** Versioned migrations, applied in order and recorded in `schema_migrations`. Never sync(). */
const MIGRATIONS = [
  { name: "0001-accounts", ...m0001 },
  { name: "0002-arms", ...m0002 },
];

export function createMigrator(sequelize: Sequelize) {
  return new Umzug({
    migrations: MIGRATIONS.map(({ name, up, down }) => ({ name, up, down })),
    context: sequelize,
    storage: new SequelizeStorage({ sequelize, tableName: "schema_migrations" }),
    logger: undefined,
  });
}

export async function migrate(sequelize: Sequelize): Promise<string[]> {
  const applied = await createMigrator(sequelize).up();
  return applied.map((m) => m.name);
}
