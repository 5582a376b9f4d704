import { DataTypes, Model, type InferAttributes, type InferCreationAttributes, type CreationOptional } from "sequelize";
import { sequelize } from "../connection";

export class LabSetting extends Model<InferAttributes<LabSetting>, InferCreationAttributes<LabSetting>> {
  declare key: string;
  declare value: string;
  declare updatedAt: CreationOptional<Date>;
}

LabSetting.init(
  {
    key: { type: DataTypes.STRING(80), primaryKey: true },
    value: { type: DataTypes.TEXT, allowNull: false },
    updatedAt: DataTypes.DATE,
  },
  { sequelize, tableName: "lab_settings", underscored: true, createdAt: false },
);
