import {
  DataTypes,
  Model,
  type CreationOptional,
  type ForeignKey,
  type InferAttributes,
  type InferCreationAttributes,
  type NonAttribute,
  type Sequelize,
} from "sequelize";
import type { User } from "./User.ts";

export class ApiToken extends Model<InferAttributes<ApiToken>, InferCreationAttributes<ApiToken>> {
  /** Public part of "id:secret"; not secret. */
  declare id: string;
  declare userId: ForeignKey<User["id"]>;
  declare name: string;
  /** SHA-256 (hex) of the 256-bit random secret. */
  declare secretHash: string;
  declare createdAt: CreationOptional<Date>;
  declare lastUsedAt: CreationOptional<Date | null>;
  declare revokedAt: CreationOptional<Date | null>;
  /** After this the token is refused; chosen at creation (default one year). */
  declare expiresAt: Date;
  declare owner?: NonAttribute<User>;

  static initModel(sequelize: Sequelize): void {
    ApiToken.init(
      {
        id: { type: DataTypes.TEXT, primaryKey: true },
        name: { type: DataTypes.TEXT, allowNull: false },
        secretHash: { type: DataTypes.TEXT, allowNull: false },
        createdAt: DataTypes.DATE,
        lastUsedAt: { type: DataTypes.DATE, allowNull: true },
        revokedAt: { type: DataTypes.DATE, allowNull: true },
        expiresAt: { type: DataTypes.DATE, allowNull: false },
      },
      { sequelize, tableName: "api_tokens", modelName: "ApiToken", updatedAt: false },
    );
  }
}
