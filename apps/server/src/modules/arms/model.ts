import { DataTypes, type Sequelize } from "sequelize";
import { armModelSchema, type Arm, type Tool } from "@jogwright/shared";
import { double, json, NULLABLE, primaryKey, serialId, string, text, time, unsigned, userRef } from "../../db/columns.ts";
import { bindModel, TableModel, type SerialId, type Stamp } from "../../db/model-parts.ts";

/**
 * Arms (`arms`, migration 0002): the DH model as JSON (SI units, the arm JSON of PRODUCT.md) and the
 * ready pose in radians. The class gives the types; `defineArmModels` binds a copy of it to one Sequelize
 * instance (db/models.ts). The queries are in service.ts.
 */
export class ArmModel extends TableModel<ArmModel> {
  declare id: SerialId;
  declare slug: string;
  declare name: string;
  declare description: string;
  /** The stored DH model, as written (parsed with the shared schema by `toApi`). */
  declare model: unknown;
  declare readyPose: number[];
  declare createdAt: Stamp;
  declare updatedAt: Stamp;

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
export class ArmRevisionModel extends TableModel<ArmRevisionModel> {
  declare id: SerialId;
  declare armId: number;
  declare revision: number;
  declare model: unknown;
  declare readyPose: number[];
  declare note: string;
  declare createdBy: string | null;
  declare createdAt: Stamp;
}

/** A tool attached to one arm revision (`arm_tools`): TCP position [m] and roll-pitch-yaw [rad], mass [kg]. */
export class ArmToolModel extends TableModel<ArmToolModel> {
  declare id: SerialId;
  declare armRevisionId: number;
  declare name: string;
  declare positionM: number[];
  declare rpyRad: number[];
  declare massKg: number;
  declare note: string;
  declare createdBy: string | null;
  declare retiredAt: Date | null;
  declare createdAt: Stamp;
  declare updatedAt: Stamp;

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
export class VersionArmModel extends TableModel<VersionArmModel> {
  declare versionId: number;
  declare armRevisionId: number;
  declare toolId: number | null;
  declare createdAt: Stamp;
}

export function defineArmModels(sequelize: Sequelize) {
  const Arm = bindModel(sequelize, ArmModel, { modelName: "Arm", tableName: "arms" }, { timestamps: true }, {
    id: serialId(),
    slug: { ...string(60), unique: "arms_slug_unique" },
    name: string(120),
    description: text(),
    model: json(),
    readyPose: json(),
    createdAt: DataTypes.DATE(3),
    updatedAt: DataTypes.DATE(3),
  });
  const ArmRevision = bindModel(sequelize, ArmRevisionModel, { modelName: "ArmRevision", tableName: "arm_revisions" }, { timestamps: true, updatedAt: false }, {
    id: serialId(),
    armId: unsigned(),
    revision: unsigned(),
    model: json(),
    readyPose: json(),
    note: text(),
    createdBy: userRef(NULLABLE),
    createdAt: DataTypes.DATE(3),
  });
  const ArmTool = bindModel(sequelize, ArmToolModel, { modelName: "ArmTool", tableName: "arm_tools" }, { timestamps: true }, {
    id: serialId(),
    armRevisionId: unsigned(),
    name: string(120),
    positionM: json(),
    rpyRad: json(),
    massKg: double(),
    note: text(),
    createdBy: userRef(NULLABLE),
    retiredAt: time(NULLABLE),
    createdAt: DataTypes.DATE(3),
    updatedAt: DataTypes.DATE(3),
  });
  const VersionArm = bindModel(sequelize, VersionArmModel, { modelName: "VersionArm", tableName: "version_arms" }, { timestamps: true, updatedAt: false }, {
    versionId: primaryKey(unsigned()),
    armRevisionId: unsigned(),
    toolId: unsigned(NULLABLE),
    createdAt: DataTypes.DATE(3),
  });
  return { Arm, ArmRevision, ArmTool, VersionArm };
}
