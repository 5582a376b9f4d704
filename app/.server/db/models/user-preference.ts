import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes } from "sequelize";
import { sequelize } from "../connection";

/** One setting of one person's views, stored as JSON text under a key such as "runs.columns". */
export class UserPreference extends Model<InferAttributes<UserPreference>, InferCreationAttributes<UserPreference>> {
  declare id: CreationOptional<number>;
  declare userId: number;
  declare key: string;
  declare value: string;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}

UserPreference.init(
  {
    id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
    userId: { type: DataTypes.INTEGER, allowNull: false },
    key: { type: DataTypes.STRING(60), allowNull: false },
    value: { type: DataTypes.TEXT, allowNull: false },
    createdAt: DataTypes.DATE,
    updatedAt: DataTypes.DATE,
  },
  // As migration 0005 made it; declared here so upsert knows its ON CONFLICT target.
  { sequelize, tableName: "user_preferences", underscored: true, indexes: [{ unique: true, fields: ["user_id", "key"] }] },
);
