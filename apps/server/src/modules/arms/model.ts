import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from "sequelize";
import { armModelSchema, type Arm } from "@jogwright/shared";

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
  return { Arm };
}
