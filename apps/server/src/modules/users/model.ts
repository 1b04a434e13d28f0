import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type NonAttribute, type Sequelize } from "sequelize";
import { ROLES, type Role, type User } from "@jogwright/shared";

/**
 * Accounts (`users`) and their roles (`user_roles`, a user may hold several). The classes give the
 * types; `defineUserModels` binds a copy of each to one Sequelize instance (see db/models.ts). The
 * password hash never leaves the users module except for sign-in (`findUserWithHashByUsername`).
 */
export class UserModel extends Model<InferAttributes<UserModel, { omit: "roleRows" }>, InferCreationAttributes<UserModel, { omit: "roleRows" }>> {
  declare id: string;
  declare username: string;
  declare displayName: string;
  declare email: string;
  declare passwordHash: string;
  declare isActive: CreationOptional<boolean>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
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

export class UserRoleModel extends Model<InferAttributes<UserRoleModel>, InferCreationAttributes<UserRoleModel>> {
  declare userId: string;
  declare role: Role;
}

export function defineUserModels(sequelize: Sequelize) {
  const User = class extends UserModel {};
  User.init(
    {
      id: { type: DataTypes.STRING(40), primaryKey: true },
      username: { type: DataTypes.STRING(40), allowNull: false, unique: "users_username_unique" },
      displayName: { type: DataTypes.STRING(80), allowNull: false },
      email: { type: DataTypes.STRING(120), allowNull: false },
      passwordHash: { type: DataTypes.STRING(255), allowNull: false },
      isActive: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: true },
      createdAt: DataTypes.DATE(3),
      updatedAt: DataTypes.DATE(3),
    },
    {
      sequelize,
      modelName: "User",
      tableName: "users",
      underscored: true,
      timestamps: true,
      defaultScope: { attributes: { exclude: ["passwordHash"] } },
      scopes: {
        /** With the password hash (sign-in only). */
        withHash: { attributes: { include: ["passwordHash"] } },
        active: { where: { isActive: true } },
      },
    },
  );
  const UserRole = class extends UserRoleModel {};
  UserRole.init(
    {
      userId: { type: DataTypes.STRING(40), primaryKey: true },
      role: { type: DataTypes.ENUM(...ROLES), primaryKey: true },
    },
    { sequelize, modelName: "UserRole", tableName: "user_roles", underscored: true, timestamps: false },
  );
  return { User, UserRole };
}

type UserModels = ReturnType<typeof defineUserModels>;

/** User–Role, and the scopes that need the association: `withRoles`, `withRole(role)`. */
export function associateUserModels({ User, UserRole }: UserModels): void {
  User.hasMany(UserRole, { as: "roleRows", foreignKey: "userId" });
  User.hasMany(UserRole, { as: "heldRole", foreignKey: "userId" });
  UserRole.belongsTo(User, { as: "user", foreignKey: "userId" });
  User.addScope("withRoles", { include: [{ model: UserRole, as: "roleRows" }] });
  // Only who holds `role` (an inner join); combine with withRoles for the full role list.
  User.addScope("withRole", (role: Role) => ({ include: [{ model: UserRole, as: "heldRole", required: true, where: { role }, attributes: [] }] }));
}
