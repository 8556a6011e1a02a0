// PUT /api/campaigns/[campaignId]/retention: the campaign's retention date, embargo and legal hold (C10; data
// stewards, lib/policy.ts 'retention.manage'). A file's own dates, where set, override these. Audited.
import { apiRoute } from '@/lib/api/route';
import { setCampaignRetention } from '@/lib/db/queries/retention';
import { retentionBody } from '@/lib/stewardship/schemas';
import { campaignFor, campaignParams } from '../access';

export const PUT = apiRoute({ params: campaignParams, body: retentionBody }, async ({ actor, params, body, ip }) => {
  const teamId = await campaignFor(actor, params.campaignId, 'retention.manage');
  return setCampaignRetention({ campaignId: params.campaignId, teamId, values: body, actor, ip });
});
