/**
 * Ingest links: which scan each upload produced (a duplicate upload links an existing raw file to a new scan, so
 * the raw file alone cannot tell), and the analyst's metadata override recorded when a quarantined file is
 * released after its metadata was corrected (the stored bytes never change; readers apply the override).
 */
import { DataTypes, type QueryInterface } from 'sequelize';

type Ctx = { context: QueryInterface };

export async function up({ context: qi }: Ctx): Promise<void> {
  await qi.addColumn('uploads', 'scan_id', {
    type: DataTypes.INTEGER.UNSIGNED,
    allowNull: true,
    references: { model: 'scans', key: 'id' },
    onDelete: 'SET NULL',
    onUpdate: 'CASCADE',
  });
  await qi.addColumn('raw_files', 'metadata_override', { type: DataTypes.JSON, allowNull: true });
  await qi.addColumn('raw_files', 'release_note', { type: DataTypes.TEXT, allowNull: true });
}

export async function down({ context: qi }: Ctx): Promise<void> {
  await qi.removeColumn('raw_files', 'release_note');
  await qi.removeColumn('raw_files', 'metadata_override');
  await qi.removeConstraint('uploads', 'uploads_scan_id_foreign_idx').catch(() => undefined);
  await qi.removeColumn('uploads', 'scan_id');
}
