// GET /api/campaigns/[campaignId]/archive: how many of the campaign's stored files are online, archiving, archived
// or restoring (the progress of a campaign-wide move). POST {direction}: archive every online file of the campaign,
// or restore every archived one, as one queued job per file (C10; data stewards, lib/policy.ts 'archive.manage').
import { apiRoute, jsonResponse } from '@/lib/api/route';
import { campaignArchiveProgress } from '@/lib/stewardship/archive';
import { requestCampaignMove } from '@/lib/stewardship/move-requests';
import { campaignMoveBody } from '@/lib/stewardship/schemas';
import { campaignFor, campaignParams } from '../access';

export const GET = apiRoute({ params: campaignParams }, async ({ actor, params }) => {
  await campaignFor(actor, params.campaignId, 'campaign.view');
  return { progress: await campaignArchiveProgress(params.campaignId) };
});

export const POST = apiRoute(
  { params: campaignParams, body: campaignMoveBody },
  async ({ actor, params, body, ip }) => {
    await campaignFor(actor, params.campaignId, 'archive.manage');
    const out = await requestCampaignMove({ campaignId: params.campaignId, kind: body.direction, actor, ip });
    return jsonResponse(out, { status: 202 });
  },
);
