import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type NonAttribute, type Sequelize } from "sequelize";

/**
 * Rate profiles (`profiles`): a name, the operator it is for, the arm, who created it. Its versions live
 * in the versions module. The class gives the types; `defineProfileModels` binds a copy to one
 * Sequelize instance (db/models.ts, which also declares the associations to users, arms and versions).
 */
export class ProfileModel extends Model<
  InferAttributes<ProfileModel, { omit: "operator" | "arm" }>,
  InferCreationAttributes<ProfileModel, { omit: "operator" | "arm" }>
> {
  declare id: CreationOptional<number>;
  declare name: string;
  declare operatorId: string;
  declare armId: number;
  declare createdBy: string;
  declare createdAt: CreationOptional<Date>;
  /** Included by the `withNames` scope (associations in db/models.ts). */
  declare operator?: NonAttribute<{ displayName: string }>;
  declare arm?: NonAttribute<{ name: string }>;
}

export function defineProfileModels(sequelize: Sequelize) {
  const Profile = class extends ProfileModel {};
  Profile.init(
    {
      id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true },
      name: { type: DataTypes.STRING(120), allowNull: false },
      operatorId: { type: DataTypes.STRING(40), allowNull: false },
      armId: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
      createdBy: { type: DataTypes.STRING(40), allowNull: false },
      createdAt: DataTypes.DATE(3),
    },
    { sequelize, modelName: "Profile", tableName: "profiles", underscored: true, timestamps: true, updatedAt: false },
  );
  return { Profile };
}
