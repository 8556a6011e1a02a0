/**
 * Public landing pages of campaigns and a searchable audit trail (C10, C13; issue 14).
 *
 * `campaign_landings`: one row per campaign whose landing page a PI or data steward has published at least once.
 * `public_id` is the stable part of the page's address (/data/<public_id>) and never changes, so a withdrawn and
 * republished page keeps its address; `published` says whether anyone may open it now. No row means "never public".
 *
 * `audit_events.campaign_id` and `audit_events.sha256`: the campaign an event belongs to and the SHA-256 of the
 * object it concerns, filled in when an event is written (lib/audit.ts) so the trail can be searched by campaign
 * and by checksum with an index. Older events are filled in here from their target and details.
 */
import { DataTypes, type QueryInterface } from 'sequelize';

type Ctx = { context: QueryInterface };

export async function up({ context: qi }: Ctx): Promise<void> {
  await qi.createTable('campaign_landings', {
    id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true, allowNull: false },
    campaign_id: {
      type: DataTypes.INTEGER.UNSIGNED,
      allowNull: false,
      unique: true,
      references: { model: 'campaigns', key: 'id' },
      onDelete: 'CASCADE',
      onUpdate: 'CASCADE',
    },
    public_id: { type: DataTypes.STRING(24), allowNull: false, unique: true },
    published: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false },
    published_at: { type: DataTypes.DATE(3), allowNull: true },
    changed_by: {
      type: DataTypes.INTEGER.UNSIGNED,
      allowNull: true,
      references: { model: 'users', key: 'id' },
      onDelete: 'SET NULL',
      onUpdate: 'CASCADE',
    },
    created_at: { type: DataTypes.DATE(3), allowNull: false },
    updated_at: { type: DataTypes.DATE(3), allowNull: false },
  });

  await qi.addColumn('audit_events', 'campaign_id', { type: DataTypes.INTEGER.UNSIGNED, allowNull: true });
  await qi.addColumn('audit_events', 'sha256', { type: DataTypes.CHAR(64), allowNull: true });
  await qi.addIndex('audit_events', ['campaign_id', 'at'], { name: 'audit_events_campaign_at' });
  await qi.addIndex('audit_events', ['sha256'], { name: 'audit_events_sha256' });

  const q = (sql: string) => qi.sequelize.query(sql);
  await q(`UPDATE audit_events SET sha256 = LOWER(JSON_UNQUOTE(JSON_EXTRACT(details, '$.sha256')))
            WHERE JSON_UNQUOTE(JSON_EXTRACT(details, '$.sha256')) REGEXP '^[0-9a-fA-F]{64}$'`);
  await q(`UPDATE audit_events SET campaign_id = CAST(target_id AS UNSIGNED)
            WHERE target_type = 'campaign' AND target_id REGEXP '^[0-9]+$'`);
  await q(`UPDATE audit_events SET campaign_id = CAST(JSON_EXTRACT(details, '$.campaignId') AS UNSIGNED)
            WHERE campaign_id IS NULL AND JSON_TYPE(JSON_EXTRACT(details, '$.campaignId')) = 'INTEGER'`);
  await q(`UPDATE audit_events a JOIN scans s ON a.target_type = 'scan' AND a.target_id = CAST(s.id AS CHAR)
              SET a.campaign_id = s.campaign_id WHERE a.campaign_id IS NULL`);
  await q(`UPDATE audit_events a JOIN shifts s ON a.target_type = 'shift' AND a.target_id = CAST(s.id AS CHAR)
              SET a.campaign_id = s.campaign_id WHERE a.campaign_id IS NULL`);
  await q(`UPDATE audit_events a JOIN uploads u ON a.target_type = 'upload' AND a.target_id = CAST(u.id AS CHAR)
              JOIN shifts s ON s.id = u.shift_id
              SET a.campaign_id = s.campaign_id WHERE a.campaign_id IS NULL`);
  await q(`UPDATE audit_events a
              JOIN (SELECT raw_file_id, MIN(campaign_id) AS campaign_id FROM scans GROUP BY raw_file_id) s
                ON a.target_type = 'raw_file' AND a.target_id = CAST(s.raw_file_id AS CHAR)
              SET a.campaign_id = s.campaign_id WHERE a.campaign_id IS NULL`);
  await q(`UPDATE audit_events a JOIN raw_files f ON a.target_type = 'raw_file' AND a.target_id = CAST(f.id AS CHAR)
              SET a.sha256 = f.sha256 WHERE a.sha256 IS NULL`);
  await q(`UPDATE audit_events a JOIN scans s ON a.target_type = 'scan' AND a.target_id = CAST(s.id AS CHAR)
              JOIN raw_files f ON f.id = s.raw_file_id
              SET a.sha256 = f.sha256 WHERE a.sha256 IS NULL`);
}

export async function down({ context: qi }: Ctx): Promise<void> {
  await qi.removeIndex('audit_events', 'audit_events_sha256');
  await qi.removeIndex('audit_events', 'audit_events_campaign_at');
  await qi.removeColumn('audit_events', 'sha256');
  await qi.removeColumn('audit_events', 'campaign_id');
  await qi.dropTable('campaign_landings');
}
