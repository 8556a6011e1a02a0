/**
 * Archive and restore, and scheduled fixity checks (C10/C11, issue 14).
 *
 * raw_files.archive_state: where the file's bytes live and whether a job is moving them: `online` (the raw
 * bucket, `bucket`/`storage_key`), `archiving` (a job is copying them to the archive bucket), `archived` (the
 * archive bucket, `archive_bucket`/`archive_key`, in the archival storage class), `restoring` (a job is copying
 * them back). `fixity_flagged_at`: the last fixity check found the object missing or different (cleared by a
 * later check that matches). fixity_checks gets the expected hash, the outcome word and the place checked.
 */
import { DataTypes, type QueryInterface } from 'sequelize';

type Ctx = { context: QueryInterface };

export async function up({ context: qi }: Ctx): Promise<void> {
  await qi.addColumn('raw_files', 'archive_state', {
    type: DataTypes.ENUM('online', 'archiving', 'archived', 'restoring'),
    allowNull: false,
    defaultValue: 'online',
  });
  await qi.addColumn('raw_files', 'archive_bucket', { type: DataTypes.STRING(63), allowNull: true });
  await qi.addColumn('raw_files', 'fixity_flagged_at', { type: DataTypes.DATE(3), allowNull: true });
  await qi.addIndex('raw_files', ['archive_state'], { name: 'raw_files_archive_state' });
  await qi.addIndex('raw_files', ['last_fixity_at'], { name: 'raw_files_last_fixity' });
  await qi.addColumn('fixity_checks', 'sha256_expected', { type: DataTypes.CHAR(64), allowNull: true });
  await qi.addColumn('fixity_checks', 'outcome', {
    type: DataTypes.ENUM('match', 'mismatch', 'missing'),
    allowNull: true,
  });
  await qi.addColumn('fixity_checks', 'bucket', { type: DataTypes.STRING(63), allowNull: true });
  await qi.addColumn('fixity_checks', 'object_key', { type: DataTypes.STRING(512), allowNull: true });
  await qi.addIndex('fixity_checks', ['ok', 'checked_at'], { name: 'fixity_checks_ok_at' });
}

export async function down({ context: qi }: Ctx): Promise<void> {
  await qi.removeIndex('fixity_checks', 'fixity_checks_ok_at');
  await qi.removeColumn('fixity_checks', 'object_key');
  await qi.removeColumn('fixity_checks', 'bucket');
  await qi.removeColumn('fixity_checks', 'outcome');
  await qi.removeColumn('fixity_checks', 'sha256_expected');
  await qi.removeIndex('raw_files', 'raw_files_last_fixity');
  await qi.removeIndex('raw_files', 'raw_files_archive_state');
  await qi.removeColumn('raw_files', 'fixity_flagged_at');
  await qi.removeColumn('raw_files', 'archive_bucket');
  await qi.removeColumn('raw_files', 'archive_state');
}
