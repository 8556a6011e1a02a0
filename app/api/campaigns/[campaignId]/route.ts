// GET /api/campaigns/[campaignId]: the campaign with its shifts, scan counts per state, current versions and what
// the caller may do on it.
import { apiRoute } from '@/lib/api/route';
import { getCampaignOverview, getCampaignTeamId, listCampaignTargets } from '@/lib/db/queries/scans';
import { authorizeObject } from '@/lib/policy';
import { campaignAbilities, campaignParams } from './access';

export const GET = apiRoute({ params: campaignParams }, async ({ actor, params }) => {
  const teamId = await getCampaignTeamId({ campaignId: params.campaignId });
  authorizeObject(actor, 'campaign.view', { teamId, surface: 'campaign' });
  const [campaign, targets] = await Promise.all([
    getCampaignOverview({ campaignId: params.campaignId }),
    listCampaignTargets({ campaignId: params.campaignId }),
  ]);
  return { campaign, targets, can: campaignAbilities(actor, teamId) };
});
