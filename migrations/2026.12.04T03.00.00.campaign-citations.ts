/**
 * Citation metadata of a campaign (C10, issue 14): one row per campaign holding what a DataCite record and a
 * schema.org Dataset need beyond the campaign itself (creators with ORCID iDs, affiliations, funding, licence,
 * description, keywords, related identifiers, version, DOI, publisher, year). `body` is the parsed value of
 * lib/citation/schema.ts citationBodySchema, the one definition of its shape; `items_present` and `items_total`
 * are its completeness counts (lib/citation/completeness.ts), kept beside it so the steward's file register can
 * sort and filter by completeness in SQL.
 */
import { DataTypes, type QueryInterface } from 'sequelize';

type Ctx = { context: QueryInterface };

export async function up({ context: qi }: Ctx): Promise<void> {
  await qi.createTable('campaign_citations', {
    id: { type: DataTypes.INTEGER.UNSIGNED, autoIncrement: true, primaryKey: true, allowNull: false },
    campaign_id: {
      type: DataTypes.INTEGER.UNSIGNED,
      allowNull: false,
      unique: true,
      references: { model: 'campaigns', key: 'id' },
      onDelete: 'CASCADE',
      onUpdate: 'CASCADE',
    },
    body: { type: DataTypes.JSON, allowNull: false },
    items_present: { type: DataTypes.SMALLINT.UNSIGNED, allowNull: false, defaultValue: 0 },
    items_total: { type: DataTypes.SMALLINT.UNSIGNED, allowNull: false, defaultValue: 0 },
    required_missing: { type: DataTypes.JSON, allowNull: true },
    updated_by: {
      type: DataTypes.INTEGER.UNSIGNED,
      allowNull: true,
      references: { model: 'users', key: 'id' },
      onDelete: 'SET NULL',
      onUpdate: 'CASCADE',
    },
    created_at: { type: DataTypes.DATE(3), allowNull: false },
    updated_at: { type: DataTypes.DATE(3), allowNull: false },
  });
}

export async function down({ context: qi }: Ctx): Promise<void> {
  await qi.dropTable('campaign_citations');
}
