/**
 * Retention, embargo and legal hold per campaign, and legal hold per file (C10, issue 14). A file's own
 * `retention_until` / `embargo_until` (already in raw_files) override its campaign's where they are set; a legal
 * hold on the file or on its campaign blocks deletion outright. Deletion requests (deletion_requests, initial
 * schema) get `object_removed_at`: the moment the stored object was removed, after the confirmation.
 */
import { DataTypes, type QueryInterface } from 'sequelize';

type Ctx = { context: QueryInterface };

export async function up({ context: qi }: Ctx): Promise<void> {
  await qi.addColumn('campaigns', 'retention_until', { type: DataTypes.DATEONLY, allowNull: true });
  await qi.addColumn('campaigns', 'legal_hold', { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false });
  await qi.addColumn('campaigns', 'legal_hold_note', { type: DataTypes.TEXT, allowNull: true });
  await qi.addColumn('raw_files', 'legal_hold', { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false });
  await qi.addColumn('deletion_requests', 'object_removed_at', { type: DataTypes.DATE(3), allowNull: true });
}

export async function down({ context: qi }: Ctx): Promise<void> {
  await qi.removeColumn('deletion_requests', 'object_removed_at');
  await qi.removeColumn('raw_files', 'legal_hold');
  await qi.removeColumn('campaigns', 'legal_hold_note');
  await qi.removeColumn('campaigns', 'legal_hold');
  await qi.removeColumn('campaigns', 'retention_until');
}
