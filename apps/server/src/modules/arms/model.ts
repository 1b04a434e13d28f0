import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from "sequelize";
import { armModelSchema, type Arm, type Tool } from "@jogwright/shared";

/**
 * Arms (`arms`, migration 0002): the DH model as JSON (SI units, the arm JSON of PRODUCT.md) and the
 * ready pose in radians. The class gives the types; `defineArmModels` binds a copy of it to one Sequelize
 * instance (db/models.ts). The queries are in service.ts.
 */
export class ArmModel extends Model<InferAttributes<ArmModel>, InferCreationAttributes<ArmModel>> {
  declare id: CreationOptional<number>;
  declare slug: string;
  declare name: string;
  declare description: string;
  /** The stored DH model, as written (parsed with the shared schema by `toApi`). */
  declare model: unknown;
  declare readyPose: number[];
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;

  /** The arm as the API shows it (`Arm`). */
  toApi(): Arm {
    return {
      id: this.id,
      name: this.name,
      description: this.description,
      model: armModelSchema.parse(this.model),
      readyPose: this.readyPose,
      createdAt: this.createdAt.toISOString(),
      updatedAt: this.updatedAt.toISOString(),
    };
  }
}

/** One kinematic definition of an arm (`arm_revisions`, migration 0018): written once, never changed. */
export class ArmRevisionModel extends Model<InferAttributes<ArmRevisionModel>, InferCreationAttributes<ArmRevisionModel>> {
  declare id: CreationOptional<number>;
  declare armId: number;
  declare revision: number;
  declare model: unknown;
  declare readyPose: number[];
  declare note: string;
  declare createdBy: string | null;
  declare createdAt: CreationOptional<Date>;
}

/** A tool attached to one arm revision (`arm_tools`): TCP position [m] and roll-pitch-yaw [rad], mass [kg]. */
export class ArmToolModel extends Model<InferAttributes<ArmToolModel>, InferCreationAttributes<ArmToolModel>> {
  declare id: CreationOptional<number>;
  declare armRevisionId: number;
  declare name: string;
  declare positionM: number[];
  declare rpyRad: number[];
  declare massKg: number;
  declare note: string;
  declare createdBy: string | null;
  declare retiredAt: Date | null;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;

  toApi(): Tool {
    return {
      id: this.id,
      armRevisionId: this.armRevisionId,
      name: this.name,
      positionM: this.positionM,
      rpyRad: this.rpyRad,
      massKg: Number(this.massKg),
      note: this.note,
      retiredAt: this.retiredAt ? this.retiredAt.toISOString() : null,
      createdAt: this.createdAt.toISOString(),
    };
  }
}

/** The arm revision and tool a profile version was saved on (`version_arms`): written once with the version. */
export class VersionArmModel extends Model<InferAttributes<VersionArmModel>, InferCreationAttributes<VersionArmModel>> {
  declare versionId: number;
  declare armRevisionId: number;
  declare toolId: number | null;
  declare createdAt: CreationOptional<Date>;
}

export function defineArmModels(sequelize: Sequelize) {
  const Arm = class extends ArmModel {};
  Arm.init(
    {
      id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
      slug: { type: DataTypes.STRING(60), allowNull: false, unique: "arms_slug_unique" },
      name: { type: DataTypes.STRING(120), allowNull: false },
      description: { type: DataTypes.TEXT, allowNull: false },
      model: { type: DataTypes.JSON, allowNull: false },
      readyPose: { type: DataTypes.JSON, allowNull: false },
      createdAt: DataTypes.DATE(3),
      updatedAt: DataTypes.DATE(3),
    },
    { sequelize, modelName: "Arm", tableName: "arms", underscored: true, timestamps: true },
  );
  const ArmRevision = class extends ArmRevisionModel {};
  ArmRevision.init(
    {
      id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
      armId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
      revision: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
      model: { type: DataTypes.JSON, allowNull: false },
      readyPose: { type: DataTypes.JSON, allowNull: false },
      note: { type: DataTypes.TEXT, allowNull: false },
      createdBy: { type: DataTypes.STRING(40), allowNull: true },
      createdAt: DataTypes.DATE(3),
    },
    { sequelize, modelName: "ArmRevision", tableName: "arm_revisions", underscored: true, timestamps: true, updatedAt: false },
  );
  const ArmTool = class extends ArmToolModel {};
  ArmTool.init(
    {
      id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
      armRevisionId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
      name: { type: DataTypes.STRING(120), allowNull: false },
      positionM: { type: DataTypes.JSON, allowNull: false },
      rpyRad: { type: DataTypes.JSON, allowNull: false },
      massKg: { type: DataTypes.DOUBLE, allowNull: false },
      note: { type: DataTypes.TEXT, allowNull: false },
      createdBy: { type: DataTypes.STRING(40), allowNull: true },
      retiredAt: { type: DataTypes.DATE(3), allowNull: true },
      createdAt: DataTypes.DATE(3),
      updatedAt: DataTypes.DATE(3),
    },
    { sequelize, modelName: "ArmTool", tableName: "arm_tools", underscored: true, timestamps: true },
  );
  const VersionArm = class extends VersionArmModel {};
  VersionArm.init(
    {
      versionId: { type: DataTypes.INTEGER.UNSIGNED, primaryKey: true },
      armRevisionId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
      toolId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
      createdAt: DataTypes.DATE(3),
    },
    { sequelize, modelName: "VersionArm", tableName: "version_arms", underscored: true, timestamps: true, updatedAt: false },
  );
  return { Arm, ArmRevision, ArmTool, VersionArm };
}
