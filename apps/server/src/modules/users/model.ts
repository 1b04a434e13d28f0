import { DataTypes, type CreationOptional, type NonAttribute, type Sequelize } from "sequelize";
import { ROLES, type Role, type User } from "@jogwright/shared";
import { enumOf, flag, primaryKey, string, userRef } from "../../db/columns.ts";
import { bindModel, hasManyBothWays, TableModel, type Stamp } from "../../db/model-parts.ts";

/**
 * Accounts (`users`) and their roles (`user_roles`, a user may hold several). The classes give the
 * types; `defineUserModels` binds a copy of each to one Sequelize instance (see db/models.ts). The
 * password hash never leaves the users module except for sign-in (`findUserWithHashByUsername`).
 */
export class UserModel extends TableModel<UserModel, "roleRows"> {
  declare id: string;
  declare username: string;
  declare displayName: string;
  declare email: string;
  declare passwordHash: string;
  declare isActive: CreationOptional<boolean>;
  declare createdAt: Stamp;
  declare updatedAt: Stamp;
  /** Included by the `withRoles` scope. */
  declare roleRows?: NonAttribute<UserRoleModel[]>;

  /** The account as the API shows it (`userSchema`); needs the roles included. */
  toApi(): User {
    if (!this.roleRows) throw new Error("UserModel.toApi needs its roles: load it with the withRoles scope");
    return {
      id: this.id,
      username: this.username,
      displayName: this.displayName,
      email: this.email,
      // In the enum's order (operator, engineer, safety_officer, admin), as MariaDB sorts an ENUM.
      roles: this.roleRows.map((r) => r.role).sort((a, b) => ROLES.indexOf(a) - ROLES.indexOf(b)),
      isActive: this.isActive,
      createdAt: this.createdAt.toISOString(),
      updatedAt: this.updatedAt.toISOString(),
    };
  }
}

export class UserRoleModel extends TableModel<UserRoleModel> {
  declare userId: string;
  declare role: Role;
}

export function defineUserModels(sequelize: Sequelize) {
  const userOptions = {
    timestamps: true,
    defaultScope: { attributes: { exclude: ["passwordHash"] } },
    scopes: {
      /** With the password hash (sign-in only). */
      withHash: { attributes: { include: ["passwordHash"] } },
      active: { where: { isActive: true } },
    },
  };
  const User = bindModel(sequelize, UserModel, { modelName: "User", tableName: "users" }, userOptions, {
    id: primaryKey(string(40)),
    username: { ...string(40), unique: "users_username_unique" },
    displayName: string(80),
    email: string(120),
    passwordHash: string(255),
    isActive: flag(true),
    createdAt: DataTypes.DATE(3),
    updatedAt: DataTypes.DATE(3),
  });
  const UserRole = bindModel(sequelize, UserRoleModel, { modelName: "UserRole", tableName: "user_roles" }, { timestamps: false }, {
    userId: primaryKey(userRef()),
    role: primaryKey(enumOf(ROLES)),
  });
  // User–Role, and the scopes that need the association: `withRoles`, `withRole(role)`.
  hasManyBothWays(User, UserRole, { foreignKey: "userId", as: "roleRows", inverseAs: "user" });
  User.hasMany(UserRole, { as: "heldRole", foreignKey: "userId" });
  User.addScope("withRoles", { include: [{ model: UserRole, as: "roleRows" }] });
  // Only who holds `role` (an inner join); combine with withRoles for the full role list.
  User.addScope("withRole", (role: Role) => ({ include: [{ model: UserRole, as: "heldRole", required: true, where: { role }, attributes: [] }] }));
  return { User, UserRole };
}
