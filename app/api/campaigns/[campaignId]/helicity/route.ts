// GET /api/campaigns/[campaignId]/helicity: helicity-difference residuals of the campaign's current results — the
// offset of h = +1 and h = −1 scans at matching conditions, their mean and half their difference, reported as a
// systematic of the offset (SCIENCE.md §4.4, §9.2).
import { apiRoute } from '@/lib/api/route';
import { getCampaignHelicityResiduals } from '@/lib/db/queries/helicity';
import { campaignFor, campaignParams } from '../access';

export const GET = apiRoute({ params: campaignParams }, async ({ actor, params }) => {
  await campaignFor(actor, params.campaignId, 'result.view');
  return { residuals: await getCampaignHelicityResiduals({ campaignId: params.campaignId }) };
});
