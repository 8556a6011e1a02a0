import {
  type CreationOptional,
  DataTypes,
  type InferAttributes,
  type InferCreationAttributes,
  Model,
  type Sequelize,
} from 'sequelize';
import { fk, modelOptions, pk, stampColumns } from './columns';

/** One line of the audit trail (C13). Rows are only ever inserted. */
export class AuditEvent extends Model<InferAttributes<AuditEvent>, InferCreationAttributes<AuditEvent>> {
  declare id: CreationOptional<number>;
  declare at: Date;
  declare actor_id: number | null;
  declare actor_email: string | null;
  declare action: string;
  declare team_id: number | null;
  declare target_type: string | null;
  declare target_id: string | null;
  declare ip: string | null;
  declare outcome: CreationOptional<'ok' | 'refused' | 'failed'>;
  declare details: Record<string, unknown> | null;
  /** The campaign the event belongs to and the SHA-256 of its object, when known (for searching; lib/audit.ts). */
  declare campaign_id: CreationOptional<number | null>;
  declare sha256: CreationOptional<string | null>;
}

export class FixityCheck extends Model<InferAttributes<FixityCheck>, InferCreationAttributes<FixityCheck>> {
  declare id: CreationOptional<number>;
  declare raw_file_id: number;
  declare checked_at: Date;
  declare ok: boolean;
  declare sha256_found: string | null;
  declare triggered_by: number | null;
  declare message: string | null;
  /** Archive and fixity (migration 2026.12.06T02.00.00): the catalogued hash, the outcome and the place checked. */
  declare sha256_expected: CreationOptional<string | null>;
  declare outcome: CreationOptional<'match' | 'mismatch' | 'missing' | null>;
  declare bucket: CreationOptional<string | null>;
  declare object_key: CreationOptional<string | null>;
}

export class DeletionRequest extends Model<InferAttributes<DeletionRequest>, InferCreationAttributes<DeletionRequest>> {
  declare id: CreationOptional<number>;
  declare raw_file_id: number;
  declare requested_by: number | null;
  declare confirmed_by: number | null;
  declare reason: string;
  declare confirmed_at: Date | null;
  declare cancelled_at: Date | null;
  /** When the stored object was removed (after the confirmation). */
  declare object_removed_at: CreationOptional<Date | null>;
  declare created_at: CreationOptional<Date>;
  declare updated_at: CreationOptional<Date>;
}

export class SavedComparison extends Model<InferAttributes<SavedComparison>, InferCreationAttributes<SavedComparison>> {
  declare id: CreationOptional<number>;
  declare team_id: number;
  declare slug: string;
  declare title: string;
  /** Free text beside the title (migration 2026.12.04T02.00.00). */
  declare note: CreationOptional<string | null>;
  declare spec: Record<string, unknown>;
  declare created_by: number | null;
  declare created_at: CreationOptional<Date>;
  declare updated_at: CreationOptional<Date>;
}

export class ModelCacheEntry extends Model<InferAttributes<ModelCacheEntry>, InferCreationAttributes<ModelCacheEntry>> {
  declare id: CreationOptional<number>;
  declare param_hash: string;
  declare model: string;
  declare params: Record<string, unknown>;
  /** Null while a queued run has not finished (migration 2026.12.06T06.00.00). */
  declare result: Record<string, unknown> | null;
  declare code_version: CreationOptional<string>;
  declare state: CreationOptional<'queued' | 'running' | 'done' | 'failed'>;
  declare progress_done: CreationOptional<number>;
  declare progress_total: CreationOptional<number>;
  declare error: CreationOptional<string | null>;
  declare compute_ms: CreationOptional<number | null>;
  declare created_at: CreationOptional<Date>;
  declare updated_at: CreationOptional<Date>;
}

export function initAuditModels(sequelize: Sequelize): void {
  AuditEvent.init(
    {
      id: { type: DataTypes.BIGINT.UNSIGNED, autoIncrement: true, primaryKey: true },
      at: { type: DataTypes.DATE(3), allowNull: false },
      actor_id: fk(true),
      actor_email: { type: DataTypes.STRING(254), allowNull: true },
      action: { type: DataTypes.STRING(64), allowNull: false },
      team_id: fk(true),
      target_type: { type: DataTypes.STRING(32), allowNull: true },
      target_id: { type: DataTypes.STRING(64), allowNull: true },
      ip: { type: DataTypes.STRING(64), allowNull: true },
      outcome: { type: DataTypes.ENUM('ok', 'refused', 'failed'), allowNull: false, defaultValue: 'ok' },
      details: { type: DataTypes.JSON, allowNull: true },
      campaign_id: fk(true),
      sha256: { type: DataTypes.CHAR(64), allowNull: true },
    },
    { sequelize, tableName: 'audit_events', timestamps: false, underscored: true },
  );
  FixityCheck.init(
    {
      id: pk(),
      raw_file_id: fk(),
      checked_at: { type: DataTypes.DATE(3), allowNull: false },
      ok: { type: DataTypes.BOOLEAN, allowNull: false },
      sha256_found: { type: DataTypes.CHAR(64), allowNull: true },
      triggered_by: fk(true),
      message: { type: DataTypes.TEXT, allowNull: true },
      sha256_expected: { type: DataTypes.CHAR(64), allowNull: true },
      outcome: { type: DataTypes.ENUM('match', 'mismatch', 'missing'), allowNull: true },
      bucket: { type: DataTypes.STRING(63), allowNull: true },
      object_key: { type: DataTypes.STRING(512), allowNull: true },
    },
    { sequelize, tableName: 'fixity_checks', timestamps: false, underscored: true },
  );
  DeletionRequest.init(
    {
      id: pk(),
      raw_file_id: fk(),
      requested_by: fk(true),
      confirmed_by: fk(true),
      reason: { type: DataTypes.TEXT, allowNull: false },
      confirmed_at: { type: DataTypes.DATE(3), allowNull: true },
      cancelled_at: { type: DataTypes.DATE(3), allowNull: true },
      object_removed_at: { type: DataTypes.DATE(3), allowNull: true },
      ...stampColumns(),
    },
    { sequelize, tableName: 'deletion_requests', ...modelOptions },
  );
  SavedComparison.init(
    {
      id: pk(),
      team_id: fk(),
      slug: { type: DataTypes.STRING(32), allowNull: false, unique: true },
      title: { type: DataTypes.STRING(160), allowNull: false },
      note: { type: DataTypes.TEXT, allowNull: true },
      spec: { type: DataTypes.JSON, allowNull: false },
      created_by: fk(true),
      ...stampColumns(),
    },
    { sequelize, tableName: 'saved_comparisons', ...modelOptions },
  );
  ModelCacheEntry.init(
    {
      id: pk(),
      param_hash: { type: DataTypes.CHAR(64), allowNull: false, unique: true },
      model: { type: DataTypes.STRING(32), allowNull: false },
      params: { type: DataTypes.JSON, allowNull: false },
      result: { type: DataTypes.JSON, allowNull: true },
      code_version: { type: DataTypes.STRING(32), allowNull: false, defaultValue: '' },
      state: { type: DataTypes.ENUM('queued', 'running', 'done', 'failed'), allowNull: false, defaultValue: 'done' },
      progress_done: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, defaultValue: 0 },
      progress_total: { type: DataTypes.INTEGER.UNSIGNED, allowNull: false, defaultValue: 0 },
      error: { type: DataTypes.TEXT, allowNull: true },
      compute_ms: { type: DataTypes.INTEGER.UNSIGNED, allowNull: true },
      ...stampColumns(),
    },
    { sequelize, tableName: 'model_cache', ...modelOptions },
  );
}
