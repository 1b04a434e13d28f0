import { DataTypes, type NonAttribute, type Sequelize } from "sequelize";
import { serialId, string, unsigned, userRef } from "../../db/columns.ts";
import { bindModel, TableModel, type SerialId, type Stamp } from "../../db/model-parts.ts";

/**
 * Rate profiles (`profiles`): a name, the operator it is for, the arm, who created it. Its versions live
 * in the versions module. The class gives the types; `defineProfileModels` binds a copy to one
 * Sequelize instance (db/models.ts, which also declares the associations to users, arms and versions).
 */
export class ProfileModel extends TableModel<ProfileModel, "operator" | "arm"> {
  declare id: SerialId;
  declare name: string;
  declare operatorId: string;
  declare armId: number;
  declare createdBy: string;
  declare createdAt: Stamp;
  /** Included by the `withNames` scope (associations in db/models.ts). */
  declare operator?: NonAttribute<{ displayName: string }>;
  declare arm?: NonAttribute<{ name: string }>;
}

export function defineProfileModels(sequelize: Sequelize) {
  const Profile = bindModel(sequelize, ProfileModel, { modelName: "Profile", tableName: "profiles" }, { timestamps: true, updatedAt: false }, {
    id: serialId(),
    name: string(120),
    operatorId: userRef(),
    armId: unsigned(),
    createdBy: userRef(),
    createdAt: DataTypes.DATE(3),
  });
  return { Profile };
}
