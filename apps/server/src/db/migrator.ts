import { Umzug, type UmzugStorage } from "umzug";
import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from "sequelize";
import { NOW } from "./migrations/columns.ts";
import * as m0001 from "./migrations/0001-accounts.ts";
import * as m0002 from "./migrations/0002-arms.ts";
import * as m0003 from "./migrations/0003-profiles.ts";
import * as m0004 from "./migrations/0004-approvals.ts";
import * as m0005 from "./migrations/0005-site-ceilings.ts";
import * as m0006 from "./migrations/0006-audit-log.ts";
import * as m0007 from "./migrations/0007-mail-outbox.ts";
import * as m0008 from "./migrations/0008-version-status-guard.ts";
import * as m0010 from "./migrations/0010-jog-recordings.ts";
import * as m0011 from "./migrations/0011-gamepad-mappings.ts";
import * as m0012 from "./migrations/0012-station-estop-latches.ts";
import * as m0013 from "./migrations/0013-flag-long-stops.ts";
import * as m0014 from "./migrations/0014-approval-guard.ts";
import * as m0015 from "./migrations/0015-tuning-bench.ts";
import * as m0016 from "./migrations/0016-workflow.ts";
import * as m0017 from "./migrations/0017-recording-storage.ts";
import * as m0018 from "./migrations/0018-arm-library.ts";

/** Versioned migrations, applied in order and recorded in `schema_migrations`. Never sync(). */
const MIGRATIONS = [
  { name: "0001-accounts", ...m0001 },
  { name: "0002-arms", ...m0002 },
  { name: "0003-profiles", ...m0003 },
  { name: "0004-approvals", ...m0004 },
  { name: "0005-site-ceilings", ...m0005 },
  { name: "0006-audit-log", ...m0006 },
  { name: "0007-mail-outbox", ...m0007 },
  { name: "0008-version-status-guard", ...m0008 },
  { name: "0010-jog-recordings", ...m0010 },
  { name: "0011-gamepad-mappings", ...m0011 },
  { name: "0012-station-estop-latches", ...m0012 },
  { name: "0013-flag-long-stops", ...m0013 },
  { name: "0014-approval-guard", ...m0014 },
  { name: "0015-tuning-bench", ...m0015 },
  { name: "0016-workflow", ...m0016 },
  { name: "0017-recording-storage", ...m0017 },
  { name: "0018-arm-library", ...m0018 },
];

/** One applied migration, as `schema_migrations` records it. */
class SchemaMigration extends Model<InferAttributes<SchemaMigration>, InferCreationAttributes<SchemaMigration>> {
  declare name: string;
  declare appliedAt: CreationOptional<Date>;
}

const SCHEMA_MIGRATION_COLUMNS = {
  name: { type: DataTypes.STRING(190), allowNull: false, primaryKey: true },
  applied_at: { type: DataTypes.DATE(3), allowNull: false, defaultValue: NOW },
};

/**
 * The record of applied migrations, in a table this storage creates itself (umzug's SequelizeStorage
 * would create it with sync()). The model is this Sequelize instance's own subclass, like the app's models
 * (db/models.ts).
 */
class MigrationTable implements UmzugStorage<Sequelize> {
  private readonly model: typeof SchemaMigration;
  private isEnsured = false;

  constructor(private readonly db: Sequelize) {
    this.model = class extends SchemaMigration {};
    this.model.init(
      { name: SCHEMA_MIGRATION_COLUMNS.name, appliedAt: { ...SCHEMA_MIGRATION_COLUMNS.applied_at, field: "applied_at" } },
      { sequelize: db, modelName: "SchemaMigration", tableName: "schema_migrations", timestamps: false, underscored: true },
    );
  }

  private async ensure(): Promise<void> {
    if (this.isEnsured) return;
    await this.db.getQueryInterface().createTable("schema_migrations", SCHEMA_MIGRATION_COLUMNS); // IF NOT EXISTS
    this.isEnsured = true;
  }

  async logMigration({ name }: { name: string }): Promise<void> {
    await this.ensure();
    await this.model.create({ name });
  }

  async unlogMigration({ name }: { name: string }): Promise<void> {
    await this.ensure();
    await this.model.destroy({ where: { name } });
  }

  async executed(): Promise<string[]> {
    await this.ensure();
    const rows = await this.model.findAll({ attributes: ["name"], order: [["name", "ASC"]] });
    return rows.map((r) => r.name);
  }
}

export function createMigrator(sequelize: Sequelize) {
  return new Umzug({
    migrations: MIGRATIONS.map(({ name, up, down }) => ({ name, up, down })),
    context: sequelize,
    storage: new MigrationTable(sequelize),
    logger: undefined,
  });
}

export async function migrate(sequelize: Sequelize): Promise<string[]> {
  const applied = await createMigrator(sequelize).up();
  return applied.map((m) => m.name);
}
