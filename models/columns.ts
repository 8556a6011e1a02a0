import { DataTypes } from 'sequelize';

/** Column helpers shared by the model definitions (the migrations are the schema's source of truth). */
export const pk = () => ({ type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true });
export const fk = (nullable = false) => ({ type: DataTypes.INTEGER.UNSIGNED, allowNull: nullable });
export const stampColumns = () => ({ created_at: DataTypes.DATE(3), updated_at: DataTypes.DATE(3) });
export const modelOptions = {
  underscored: true,
  timestamps: true,
  createdAt: 'created_at',
  updatedAt: 'updated_at',
} as const;
