// GET /api/campaigns/[campaignId]/citation: the campaign's citation metadata with its completeness (C10).
// PUT: replace it (the team's PI or a data steward; zod: lib/citation/schema.ts), audited as citation.updated.
import { apiRoute } from '@/lib/api/route';
import { citationBodySchema } from '@/lib/citation/schema';
import { getCitation, saveCitation } from '@/lib/db/queries/citations';
import { can } from '@/lib/policy';
import { campaignFor, campaignParams } from '../access';

export const GET = apiRoute({ params: campaignParams }, async ({ actor, params }) => {
  const teamId = await campaignFor(actor, params.campaignId, 'citation.view');
  const dto = await getCitation({ campaignId: params.campaignId });
  return {
    ...dto,
    can: { edit: can(actor, 'citation.edit', { teamId }), retention: can(actor, 'retention.manage') },
  };
});

export const PUT = apiRoute(
  { params: campaignParams, body: citationBodySchema },
  async ({ actor, params, body, ip }) => {
    const teamId = await campaignFor(actor, params.campaignId, 'citation.edit');
    const dto = await saveCitation({ campaignId: params.campaignId, teamId, body, actor, ip });
    return { ...dto, can: { edit: true, retention: can(actor, 'retention.manage') } };
  },
);
