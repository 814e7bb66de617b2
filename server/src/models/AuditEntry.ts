import {
  DataTypes,
  Model,
  type CreationOptional,
  type InferAttributes,
  type InferCreationAttributes,
  type NonAttribute,
  type Sequelize,
} from "sequelize";
import type { User } from "./User.ts";

export class AuditEntry extends Model<InferAttributes<AuditEntry>, InferCreationAttributes<AuditEntry>> {
  declare id: CreationOptional<number>;
  declare actorId: number | null;
  declare action: string;
  declare targetType: string;
  declare targetId: string | null;
  declare requestId: string | null;
  declare details: Record<string, unknown> | null;
  declare createdAt: CreationOptional<Date>;
  declare actor?: NonAttribute<User | null>;

  static initModel(sequelize: Sequelize): void {
    AuditEntry.init(
      {
        id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
        actorId: { type: DataTypes.INTEGER, allowNull: true },
        action: { type: DataTypes.TEXT, allowNull: false },
        targetType: { type: DataTypes.TEXT, allowNull: false },
        targetId: { type: DataTypes.TEXT, allowNull: true },
        requestId: { type: DataTypes.TEXT, allowNull: true },
        details: { type: DataTypes.JSONB, allowNull: true },
        createdAt: DataTypes.DATE,
      },
      { sequelize, tableName: "audit_log", modelName: "AuditEntry", updatedAt: false },
    );
  }
}
