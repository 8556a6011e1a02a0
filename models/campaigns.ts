import {
  type CreationOptional,
  DataTypes,
  type InferAttributes,
  type InferCreationAttributes,
  Model,
  type Sequelize,
} from 'sequelize';
import type { ExperimentKind } from '../reduction/formats';
import { fk, modelOptions, pk, stampColumns } from './columns';

export const EXPERIMENT_KIND_VALUES = ['angular_streaking', 'bicircular', 'two_color_phase', 'image'] as const;

export class Campaign extends Model<InferAttributes<Campaign>, InferCreationAttributes<Campaign>> {
  declare id: CreationOptional<number>;
  declare team_id: number;
  declare name: string;
  declare target: string;
  declare wavelength_nm: number;
  declare experiment_kind: ExperimentKind;
  declare description: string | null;
  declare status: CreationOptional<'active' | 'closed'>;
  declare created_by: number | null;
  declare current_calibration_id: number | null;
  declare current_settings_id: number | null;
  declare embargo_until: string | null;
  /** C10 (issue 14): keep the campaign's files until this day; a legal hold blocks deletion outright. */
  declare retention_until: CreationOptional<string | null>;
  declare legal_hold: CreationOptional<boolean>;
  declare legal_hold_note: CreationOptional<string | null>;
  declare created_at: CreationOptional<Date>;
  declare updated_at: CreationOptional<Date>;
}

export class Shift extends Model<InferAttributes<Shift>, InferCreationAttributes<Shift>> {
  declare id: CreationOptional<number>;
  declare team_id: number;
  declare campaign_id: number;
  declare title: string;
  declare status: CreationOptional<'open' | 'closed'>;
  declare opened_by: number | null;
  declare opened_at: Date;
  declare closed_by: number | null;
  declare closed_at: Date | null;
  declare receipt_sent_at: Date | null;
  declare created_at: CreationOptional<Date>;
  declare updated_at: CreationOptional<Date>;
}

export class ShiftLogEntry extends Model<InferAttributes<ShiftLogEntry>, InferCreationAttributes<ShiftLogEntry>> {
  declare id: CreationOptional<number>;
  declare shift_id: number;
  declare author_id: number | null;
  declare noted_at: Date;
  declare text: string;
  declare target: string | null;
  declare wavelength_nm: number | null;
  declare pulse_energy_uj: number | null;
  declare ellipticity: number | null;
  declare detector_voltages: Record<string, number> | null;
  declare created_at: CreationOptional<Date>;
  declare updated_at: CreationOptional<Date>;
}

export function initCampaignModels(sequelize: Sequelize): void {
  Campaign.init(
    {
      id: pk(),
      team_id: fk(),
      name: { type: DataTypes.STRING(160), allowNull: false },
      target: { type: DataTypes.STRING(32), allowNull: false },
      wavelength_nm: { type: DataTypes.DOUBLE, allowNull: false },
      experiment_kind: { type: DataTypes.ENUM(...EXPERIMENT_KIND_VALUES), allowNull: false },
      description: { type: DataTypes.TEXT, allowNull: true },
      status: { type: DataTypes.ENUM('active', 'closed'), allowNull: false, defaultValue: 'active' },
      created_by: fk(true),
      current_calibration_id: fk(true),
      current_settings_id: fk(true),
      embargo_until: { type: DataTypes.DATEONLY, allowNull: true },
      retention_until: { type: DataTypes.DATEONLY, allowNull: true },
      legal_hold: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false },
      legal_hold_note: { type: DataTypes.TEXT, allowNull: true },
      ...stampColumns(),
    },
    { sequelize, tableName: 'campaigns', ...modelOptions },
  );
  Shift.init(
    {
      id: pk(),
      team_id: fk(),
      campaign_id: fk(),
      title: { type: DataTypes.STRING(160), allowNull: false },
      status: { type: DataTypes.ENUM('open', 'closed'), allowNull: false, defaultValue: 'open' },
      opened_by: fk(true),
      opened_at: { type: DataTypes.DATE(3), allowNull: false },
      closed_by: fk(true),
      closed_at: { type: DataTypes.DATE(3), allowNull: true },
      receipt_sent_at: { type: DataTypes.DATE(3), allowNull: true },
      ...stampColumns(),
    },
    { sequelize, tableName: 'shifts', ...modelOptions },
  );
  ShiftLogEntry.init(
    {
      id: pk(),
      shift_id: fk(),
      author_id: fk(true),
      noted_at: { type: DataTypes.DATE(3), allowNull: false },
      text: { type: DataTypes.TEXT, allowNull: false },
      target: { type: DataTypes.STRING(32), allowNull: true },
      wavelength_nm: { type: DataTypes.DOUBLE, allowNull: true },
      pulse_energy_uj: { type: DataTypes.DOUBLE, allowNull: true },
      ellipticity: { type: DataTypes.DOUBLE, allowNull: true },
      detector_voltages: { type: DataTypes.JSON, allowNull: true },
      ...stampColumns(),
    },
    { sequelize, tableName: 'shift_log_entries', ...modelOptions },
  );
}
