import {
  type CreationOptional,
  DataTypes,
  type InferAttributes,
  type InferCreationAttributes,
  Model,
  type Sequelize,
} from 'sequelize';
import type { AnalysisSettings, DetectorCalibration, LobelineResult, LobeResult } from '../reduction/formats';
import { fk, modelOptions, pk, stampColumns } from './columns';

export const VERSION_STATUSES = ['draft', 'approved', 'retired'] as const;
export type VersionStatus = (typeof VERSION_STATUSES)[number];
export const JOB_STATUSES = ['queued', 'running', 'succeeded', 'failed'] as const;
export type JobStatus = (typeof JOB_STATUSES)[number];

/** A version of a detector calibration (FORMATS §2); immutable once `locked_at` is set. */
export class DetectorCalibrationVersion extends Model<
  InferAttributes<DetectorCalibrationVersion>,
  InferCreationAttributes<DetectorCalibrationVersion>
> {
  declare id: CreationOptional<number>;
  declare campaign_id: number;
  declare version: number;
  declare body: DetectorCalibration;
  declare note: string | null;
  declare status: CreationOptional<VersionStatus>;
  declare created_by: number | null;
  declare approved_by: number | null;
  declare approved_at: Date | null;
  declare locked_at: Date | null;
  declare created_at: CreationOptional<Date>;
  declare updated_at: CreationOptional<Date>;
}

/** A version of analysis settings (FORMATS §3); immutable once `locked_at` is set. */
export class AnalysisSettingsVersion extends Model<
  InferAttributes<AnalysisSettingsVersion>,
  InferCreationAttributes<AnalysisSettingsVersion>
> {
  declare id: CreationOptional<number>;
  declare campaign_id: number;
  declare version: number;
  declare body: AnalysisSettings;
  declare note: string | null;
  declare status: CreationOptional<VersionStatus>;
  declare created_by: number | null;
  declare approved_by: number | null;
  declare approved_at: Date | null;
  declare locked_at: Date | null;
  declare created_at: CreationOptional<Date>;
  declare updated_at: CreationOptional<Date>;
}

export class ReductionBatch extends Model<InferAttributes<ReductionBatch>, InferCreationAttributes<ReductionBatch>> {
  declare id: CreationOptional<number>;
  declare campaign_id: number;
  declare calibration_id: number;
  declare settings_id: number;
  declare requested_by: number | null;
  declare total: CreationOptional<number>;
  declare created_at: CreationOptional<Date>;
  declare updated_at: CreationOptional<Date>;
}

export class ReductionJob extends Model<InferAttributes<ReductionJob>, InferCreationAttributes<ReductionJob>> {
  declare id: CreationOptional<number>;
  declare scan_id: number;
  declare calibration_id: number;
  declare settings_id: number;
  declare batch_id: number | null;
  declare status: CreationOptional<JobStatus>;
  declare attempts: CreationOptional<number>;
  declare progress: CreationOptional<number>;
  declare error_message: string | null;
  declare queue_job_id: string | null;
  declare requested_by: number | null;
  declare started_at: Date | null;
  declare finished_at: Date | null;
  /** Event files split into chunk jobs (lib/queue/event-flow.ts): chunks in all and chunks stored; else null. */
  declare chunks_total: CreationOptional<number | null>;
  declare chunks_done: CreationOptional<number | null>;
  /** Chunk runs that were repeats (set by the merge). */
  declare chunks_redone: CreationOptional<number | null>;
  declare created_at: CreationOptional<Date>;
  declare updated_at: CreationOptional<Date>;
}

export class ScanResult extends Model<InferAttributes<ScanResult>, InferCreationAttributes<ScanResult>> {
  declare id: CreationOptional<number>;
  declare scan_id: number;
  declare raw_file_id: number;
  declare calibration_id: number;
  declare settings_id: number;
  declare job_id: number | null;
  declare result_json: LobelineResult;
  declare derived_bucket: string | null;
  declare derived_key: string | null;
  declare software_version: string;
  declare offset_deg: number | null;
  declare offset_err_deg: number | null;
  declare warnings_count: CreationOptional<number>;
  declare created_at: CreationOptional<Date>;
  declare updated_at: CreationOptional<Date>;
}

export class ScanResultStep extends Model<InferAttributes<ScanResultStep>, InferCreationAttributes<ScanResultStep>> {
  declare id: CreationOptional<number>;
  declare result_id: number;
  declare step_index: number;
  declare value: number | null;
  declare total_counts: number | null;
  declare offset_deg: number | null;
  declare offset_err_deg: number | null;
  declare transverse_shift_au: number | null;
  declare radius_au: number | null;
  declare radius_err_au: number | null;
  declare intensity_wcm2: number | null;
  declare intensity_err_wcm2: number | null;
  declare lobes: LobeResult[] | null;
  declare created_at: CreationOptional<Date>;
  declare updated_at: CreationOptional<Date>;
}

function versionColumns() {
  return {
    id: pk(),
    campaign_id: fk(),
    version: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
    body: { type: DataTypes.JSON, allowNull: false },
    note: { type: DataTypes.TEXT, allowNull: true },
    status: { type: DataTypes.ENUM(...VERSION_STATUSES), allowNull: false, defaultValue: 'draft' },
    created_by: fk(true),
    approved_by: fk(true),
    approved_at: { type: DataTypes.DATE(3), allowNull: true },
    locked_at: { type: DataTypes.DATE(3), allowNull: true },
    ...stampColumns(),
  };
}

export function initReductionModels(sequelize: Sequelize): void {
  DetectorCalibrationVersion.init(versionColumns(), {
    sequelize,
    tableName: 'detector_calibrations',
    ...modelOptions,
  });
  AnalysisSettingsVersion.init(versionColumns(), { sequelize, tableName: 'analysis_settings', ...modelOptions });
  ReductionBatch.init(
    {
      id: pk(),
      campaign_id: fk(),
      calibration_id: fk(),
      settings_id: fk(),
      requested_by: fk(true),
      total: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, defaultValue: 0 },
      ...stampColumns(),
    },
    { sequelize, tableName: 'reduction_batches', ...modelOptions },
  );
  ReductionJob.init(
    {
      id: pk(),
      scan_id: fk(),
      calibration_id: fk(),
      settings_id: fk(),
      batch_id: fk(true),
      status: { type: DataTypes.ENUM(...JOB_STATUSES), allowNull: false, defaultValue: 'queued' },
      attempts: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, defaultValue: 0 },
      progress: { type: DataTypes.FLOAT, allowNull: false, defaultValue: 0 },
      error_message: { type: DataTypes.TEXT, allowNull: true },
      queue_job_id: { type: DataTypes.STRING(128), allowNull: true },
      requested_by: fk(true),
      started_at: { type: DataTypes.DATE(3), allowNull: true },
      finished_at: { type: DataTypes.DATE(3), allowNull: true },
      chunks_total: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
      chunks_done: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
      chunks_redone: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
      ...stampColumns(),
    },
    { sequelize, tableName: 'reduction_jobs', ...modelOptions },
  );
  ScanResult.init(
    {
      id: pk(),
      scan_id: fk(),
      raw_file_id: fk(),
      calibration_id: fk(),
      settings_id: fk(),
      job_id: fk(true),
      result_json: { type: DataTypes.JSON, allowNull: false },
      derived_bucket: { type: DataTypes.STRING(63), allowNull: true },
      derived_key: { type: DataTypes.STRING(512), allowNull: true },
      software_version: { type: DataTypes.STRING(32), allowNull: false },
      offset_deg: { type: DataTypes.DOUBLE, allowNull: true },
      offset_err_deg: { type: DataTypes.DOUBLE, allowNull: true },
      warnings_count: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, defaultValue: 0 },
      ...stampColumns(),
    },
    { sequelize, tableName: 'scan_results', ...modelOptions },
  );
  ScanResultStep.init(
    {
      id: pk(),
      result_id: fk(),
      step_index: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false },
      value: { type: DataTypes.DOUBLE, allowNull: true },
      total_counts: { type: DataTypes.DOUBLE, allowNull: true },
      offset_deg: { type: DataTypes.DOUBLE, allowNull: true },
      offset_err_deg: { type: DataTypes.DOUBLE, allowNull: true },
      transverse_shift_au: { type: DataTypes.DOUBLE, allowNull: true },
      radius_au: { type: DataTypes.DOUBLE, allowNull: true },
      radius_err_au: { type: DataTypes.DOUBLE, allowNull: true },
      intensity_wcm2: { type: DataTypes.DOUBLE, allowNull: true },
      intensity_err_wcm2: { type: DataTypes.DOUBLE, allowNull: true },
      lobes: { type: DataTypes.JSON, allowNull: true },
      ...stampColumns(),
    },
    { sequelize, tableName: 'scan_result_steps', ...modelOptions },
  );
}
