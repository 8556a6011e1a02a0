// GET /api/campaigns/[campaignId]/scans?page=&pageSize=&sort=&dir=&status=&target=&shift=&flagged=&q=
// One page of the campaign's scans, sorted and filtered in MariaDB. Team members see the result columns; a steward
// (metadata reader) gets the same rows without them.
import { apiRoute } from '@/lib/api/route';
import { getCampaignTeamId, listCampaignScans } from '@/lib/db/queries/scans';
import { authorizeObject, can } from '@/lib/policy';
import { campaignParams } from '../access';
import { scanListQuery } from './schema';

export const GET = apiRoute({ params: campaignParams, query: scanListQuery }, async ({ actor, params, query }) => {
  const teamId = await getCampaignTeamId({ campaignId: params.campaignId });
  const full = can(actor, 'scan.view', { teamId });
  if (!full) authorizeObject(actor, 'scan.metadata', { teamId, surface: 'campaign' });
  const { rows, total } = await listCampaignScans({
    campaignId: params.campaignId,
    page: query.page,
    pageSize: query.pageSize,
    sort: query.sort,
    dir: query.dir,
    status: query.status,
    target: query.target,
    shiftId: query.shift,
    flagged: query.flagged,
    q: query.q || undefined,
    metadataOnly: !full,
  });
  return { rows, total, page: query.page, pageSize: query.pageSize, sort: query.sort, dir: query.dir };
});
