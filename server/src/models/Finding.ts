import {
  DataTypes,
  Model,
  type CreationOptional,
  type ForeignKey,
  type InferAttributes,
  type InferCreationAttributes,
  type Sequelize,
} from "sequelize";
import type { FindingCode, Severity } from "@tidemark/shared/types/report";
import type { FileResult } from "./FileResult.ts";

export class Finding extends Model<InferAttributes<Finding>, InferCreationAttributes<Finding>> {
  declare id: CreationOptional<number>;
  declare fileResultId: ForeignKey<FileResult["id"]>;
  declare code: FindingCode;
  declare severity: Severity;
  declare channel: number | null;
  declare startSeconds: number | null;
  declare endSeconds: number | null;
  declare message: string;
  declare createdAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    Finding.init(
      {
        id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
        code: { type: DataTypes.TEXT, allowNull: false },
        severity: { type: DataTypes.TEXT, allowNull: false },
        channel: { type: DataTypes.INTEGER, allowNull: true },
        startSeconds: { type: DataTypes.DOUBLE, allowNull: true },
        endSeconds: { type: DataTypes.DOUBLE, allowNull: true },
        message: { type: DataTypes.TEXT, allowNull: false },
        createdAt: DataTypes.DATE,
      },
      { sequelize, tableName: "findings", modelName: "Finding", updatedAt: false },
    );
  }
}
