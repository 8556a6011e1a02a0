import {
  type CreationOptional,
  DataTypes,
  type InferAttributes,
  type InferCreationAttributes,
  Model,
  type Sequelize,
} from 'sequelize';
import type { CitationBody } from '../lib/citation/schema';
import { fk, modelOptions, pk, stampColumns } from './columns';

/** A campaign's citation metadata (C10; migrations/2026.12.04T03.00.00.campaign-citations.ts). */
export class CampaignCitation extends Model<
  InferAttributes<CampaignCitation>,
  InferCreationAttributes<CampaignCitation>
> {
  declare id: CreationOptional<number>;
  declare campaign_id: number;
  declare body: CitationBody;
  declare items_present: number;
  declare items_total: number;
  declare required_missing: string[] | null;
  declare updated_by: number | null;
  declare created_at: CreationOptional<Date>;
  declare updated_at: CreationOptional<Date>;
}

/**
 * A campaign's public landing page (C10; migrations/2026.12.06T03.00.00.landing-pages-and-audit-search.ts):
 * `public_id` is the stable address part (/data/<public_id>), `published` whether anyone may open it now.
 */
export class CampaignLanding extends Model<InferAttributes<CampaignLanding>, InferCreationAttributes<CampaignLanding>> {
  declare id: CreationOptional<number>;
  declare campaign_id: number;
  declare public_id: string;
  declare published: boolean;
  declare published_at: Date | null;
  declare changed_by: number | null;
  declare created_at: CreationOptional<Date>;
  declare updated_at: CreationOptional<Date>;
}

export function initCitationModels(sequelize: Sequelize): void {
  CampaignLanding.init(
    {
      id: pk(),
      campaign_id: { ...fk(), unique: true },
      public_id: { type: DataTypes.STRING(24), allowNull: false, unique: true },
      published: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false },
      published_at: { type: DataTypes.DATE(3), allowNull: true },
      changed_by: fk(true),
      ...stampColumns(),
    },
    { sequelize, tableName: 'campaign_landings', ...modelOptions },
  );
  CampaignCitation.init(
    {
      id: pk(),
      campaign_id: { ...fk(), unique: true },
      body: { type: DataTypes.JSON, allowNull: false },
      items_present: { type: DataTypes.SMALLINT.UNSIGNED, allowNull: false, defaultValue: 0 },
      items_total: { type: DataTypes.SMALLINT.UNSIGNED, allowNull: false, defaultValue: 0 },
      required_missing: { type: DataTypes.JSON, allowNull: true },
      updated_by: fk(true),
      ...stampColumns(),
    },
    { sequelize, tableName: 'campaign_citations', ...modelOptions },
  );
}
