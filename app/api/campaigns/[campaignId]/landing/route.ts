// GET /api/campaigns/[campaignId]/landing: whether the campaign's public landing page is published, and its address
// (every member and data steward). PUT { published }: publish or withdraw it (the team's PI or a data steward;
// lib/policy.ts 'landing.publish'), audited as campaign.landing_published / campaign.landing_withdrawn (C10).
import { z } from 'zod';
import { apiRoute } from '@/lib/api/route';
import { getLandingState, setLandingPublished } from '@/lib/db/queries/landing';
import { can } from '@/lib/policy';
import { campaignFor, campaignParams } from '../access';

export const dynamic = 'force-dynamic';

const body = z.object({ published: z.boolean({ message: 'Say whether the page is published (true or false).' }) });

export const GET = apiRoute({ params: campaignParams }, async ({ actor, params }) => {
  const teamId = await campaignFor(actor, params.campaignId, 'citation.view');
  return {
    landing: await getLandingState({ campaignId: params.campaignId }),
    can: { publish: can(actor, 'landing.publish', { teamId }) },
  };
});

export const PUT = apiRoute({ params: campaignParams, body }, async ({ actor, params, body, ip }) => {
  const teamId = await campaignFor(actor, params.campaignId, 'landing.publish');
  const landing = await setLandingPublished({
    campaignId: params.campaignId,
    teamId,
    published: body.published,
    actor,
    ip,
  });
  return { landing, can: { publish: true } };
});
