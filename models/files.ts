import {
  type CreationOptional,
  DataTypes,
  type InferAttributes,
  type InferCreationAttributes,
  Model,
  type Sequelize,
} from 'sequelize';
import type { ExperimentKind, ScanMetadata } from '../reduction/formats';
import { EXPERIMENT_KIND_VALUES } from './campaigns';
import { fk, modelOptions, pk, stampColumns } from './columns';

export const RAW_FILE_STATUSES = ['accepted', 'quarantined', 'released', 'replaced'] as const;
export type RawFileStatus = (typeof RAW_FILE_STATUSES)[number];
/**
 * Where a raw file's bytes are (migration 2026.12.06T02.00.00): `online` in the raw bucket, `archived` in the
 * archive bucket; `archiving` and `restoring` while a job moves them (lib/stewardship/archive.ts).
 */
export const ARCHIVE_STATES = ['online', 'archiving', 'archived', 'restoring'] as const;
export type ArchiveState = (typeof ARCHIVE_STATES)[number];
export const UPLOAD_STATUSES = ['open', 'verifying', 'completed', 'aborted', 'failed'] as const;
export const SCAN_STATUSES = ['uploaded', 'queued', 'reducing', 'reduced', 'failed', 'quarantined'] as const;
export type ScanStatus = (typeof SCAN_STATUSES)[number];

export class RawFile extends Model<InferAttributes<RawFile>, InferCreationAttributes<RawFile>> {
  declare id: CreationOptional<number>;
  declare team_id: number;
  declare sha256: string;
  declare bucket: string;
  declare storage_key: string;
  /** BIGINT comes back from the driver as a string or bigint; use Number() at the boundary. */
  declare size_bytes: number | string;
  declare original_name: string;
  declare status: RawFileStatus;
  declare quarantine_reasons: string[] | null;
  declare metadata: ScanMetadata | null;
  declare metadata_completeness: number | null;
  declare uploaded_by: number | null;
  declare verified_at: Date | null;
  declare released_by: number | null;
  declare released_at: Date | null;
  declare replaced_by_id: number | null;
  /** Analyst's corrected metadata (lib/ingest/schemas.ts metadataOverrideSchema) recorded at release. */
  declare metadata_override: CreationOptional<Record<string, unknown> | null>;
  declare release_note: CreationOptional<string | null>;
  declare storage_class: CreationOptional<string>;
  declare archived_at: Date | null;
  declare archive_key: string | null;
  declare embargo_until: string | null;
  declare retention_until: string | null;
  declare last_fixity_at: Date | null;
  declare last_fixity_ok: boolean | null;
  declare deleted_at: Date | null;
  /** C10 (issue 14): blocks deletion outright. */
  declare legal_hold: CreationOptional<boolean>;
  /** Archive and fixity (issue 14): see ARCHIVE_STATES; the archive copy is archive_bucket/archive_key. */
  declare archive_state: CreationOptional<ArchiveState>;
  declare archive_bucket: CreationOptional<string | null>;
  /** Set when a fixity check found the object missing or changed; cleared by a later matching check. */
  declare fixity_flagged_at: CreationOptional<Date | null>;
  declare created_at: CreationOptional<Date>;
  declare updated_at: CreationOptional<Date>;
}

export class Upload extends Model<InferAttributes<Upload>, InferCreationAttributes<Upload>> {
  declare id: CreationOptional<number>;
  declare team_id: number;
  declare shift_id: number;
  declare user_id: number;
  declare bucket: string;
  declare object_key: string;
  declare file_name: string;
  declare size_bytes: number | string;
  declare last_modified_ms: number | string | null;
  declare client_sha256: string | null;
  declare precheck: unknown;
  declare multipart_upload_id: string | null;
  declare part_size: number | null;
  declare part_count: number | null;
  declare status: CreationOptional<(typeof UPLOAD_STATUSES)[number]>;
  declare raw_file_id: number | null;
  /** The scan this upload produced (set on completion; a duplicate links an existing raw file). */
  declare scan_id: CreationOptional<number | null>;
  declare error: string | null;
  declare created_at: CreationOptional<Date>;
  declare updated_at: CreationOptional<Date>;
}

export class Scan extends Model<InferAttributes<Scan>, InferCreationAttributes<Scan>> {
  declare id: CreationOptional<number>;
  declare team_id: number;
  declare campaign_id: number;
  declare shift_id: number;
  declare raw_file_id: number;
  declare experiment_kind: ExperimentKind | null;
  declare title: string | null;
  declare target: string | null;
  declare wavelength_nm: number | null;
  declare ellipticity: number | null;
  declare helicity: number | null;
  declare step_quantity: string | null;
  declare n_steps: number | null;
  declare n_y: number | null;
  declare n_x: number | null;
  declare started_at: Date | null;
  declare status: ScanStatus;
  declare status_message: string | null;
  declare flagged: CreationOptional<boolean>;
  declare flag_note: string | null;
  declare latest_result_id: number | null;
  declare offset_deg: number | null;
  declare offset_err_deg: number | null;
  declare created_by: number | null;
  declare created_at: CreationOptional<Date>;
  declare updated_at: CreationOptional<Date>;
}

export function initFileModels(sequelize: Sequelize): void {
  RawFile.init(
    {
      id: pk(),
      team_id: fk(),
      sha256: { type: DataTypes.CHAR(64), allowNull: false, unique: true },
      bucket: { type: DataTypes.STRING(63), allowNull: false },
      storage_key: { type: DataTypes.STRING(512), allowNull: false, unique: true },
      size_bytes: { type: DataTypes.BIGINT.UNSIGNED, allowNull: false },
      original_name: { type: DataTypes.STRING(255), allowNull: false },
      status: { type: DataTypes.ENUM(...RAW_FILE_STATUSES), allowNull: false },
      quarantine_reasons: { type: DataTypes.JSON, allowNull: true },
      metadata: { type: DataTypes.JSON, allowNull: true },
      metadata_completeness: { type: DataTypes.FLOAT, allowNull: true },
      uploaded_by: fk(true),
      verified_at: { type: DataTypes.DATE(3), allowNull: true },
      released_by: fk(true),
      released_at: { type: DataTypes.DATE(3), allowNull: true },
      replaced_by_id: fk(true),
      metadata_override: { type: DataTypes.JSON, allowNull: true },
      release_note: { type: DataTypes.TEXT, allowNull: true },
      storage_class: { type: DataTypes.STRING(32), allowNull: false, defaultValue: 'STANDARD' },
      archived_at: { type: DataTypes.DATE(3), allowNull: true },
      archive_key: { type: DataTypes.STRING(512), allowNull: true },
      embargo_until: { type: DataTypes.DATEONLY, allowNull: true },
      retention_until: { type: DataTypes.DATEONLY, allowNull: true },
      last_fixity_at: { type: DataTypes.DATE(3), allowNull: true },
      last_fixity_ok: { type: DataTypes.BOOLEAN, allowNull: true },
      deleted_at: { type: DataTypes.DATE(3), allowNull: true },
      legal_hold: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false },
      archive_state: { type: DataTypes.ENUM(...ARCHIVE_STATES), allowNull: false, defaultValue: 'online' },
      archive_bucket: { type: DataTypes.STRING(63), allowNull: true },
      fixity_flagged_at: { type: DataTypes.DATE(3), allowNull: true },
      ...stampColumns(),
    },
    { sequelize, tableName: 'raw_files', ...modelOptions },
  );
  Upload.init(
    {
      id: pk(),
      team_id: fk(),
      shift_id: fk(),
      user_id: fk(),
      bucket: { type: DataTypes.STRING(63), allowNull: false },
      object_key: { type: DataTypes.STRING(512), allowNull: false, unique: true },
      file_name: { type: DataTypes.STRING(255), allowNull: false },
      size_bytes: { type: DataTypes.BIGINT.UNSIGNED, allowNull: false },
      last_modified_ms: { type: DataTypes.BIGINT, allowNull: true },
      client_sha256: { type: DataTypes.CHAR(64), allowNull: true },
      precheck: { type: DataTypes.JSON, allowNull: true },
      multipart_upload_id: { type: DataTypes.STRING(1024), allowNull: true },
      part_size: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
      part_count: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
      status: { type: DataTypes.ENUM(...UPLOAD_STATUSES), allowNull: false, defaultValue: 'open' },
      raw_file_id: fk(true),
      scan_id: fk(true),
      error: { type: DataTypes.TEXT, allowNull: true },
      ...stampColumns(),
    },
    { sequelize, tableName: 'uploads', ...modelOptions },
  );
  Scan.init(
    {
      id: pk(),
      team_id: fk(),
      campaign_id: fk(),
      shift_id: fk(),
      raw_file_id: fk(),
      experiment_kind: { type: DataTypes.ENUM(...EXPERIMENT_KIND_VALUES), allowNull: true },
      title: { type: DataTypes.STRING(255), allowNull: true },
      target: { type: DataTypes.STRING(32), allowNull: true },
      wavelength_nm: { type: DataTypes.DOUBLE, allowNull: true },
      ellipticity: { type: DataTypes.DOUBLE, allowNull: true },
      helicity: { type: DataTypes.TINYINT, allowNull: true },
      step_quantity: { type: DataTypes.STRING(32), allowNull: true },
      n_steps: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
      n_y: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
      n_x: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
      started_at: { type: DataTypes.DATE(3), allowNull: true },
      status: { type: DataTypes.ENUM(...SCAN_STATUSES), allowNull: false },
      status_message: { type: DataTypes.TEXT, allowNull: true },
      flagged: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false },
      flag_note: { type: DataTypes.TEXT, allowNull: true },
      latest_result_id: fk(true),
      offset_deg: { type: DataTypes.DOUBLE, allowNull: true },
      offset_err_deg: { type: DataTypes.DOUBLE, allowNull: true },
      created_by: fk(true),
      ...stampColumns(),
    },
    { sequelize, tableName: 'scans', ...modelOptions },
  );
}
