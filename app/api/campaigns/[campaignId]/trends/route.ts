// GET /api/campaigns/[campaignId]/trends: per-step offset, radius and intensity of the latest result of every
// reduced scan, for the campaign trend plot.
import { apiRoute } from '@/lib/api/route';
import { getCampaignTrend } from '@/lib/db/queries/scans';
import { campaignFor, campaignParams } from '../access';

export const GET = apiRoute({ params: campaignParams }, async ({ actor, params }) => {
  await campaignFor(actor, params.campaignId, 'result.view');
  return { points: await getCampaignTrend({ campaignId: params.campaignId }) };
});
