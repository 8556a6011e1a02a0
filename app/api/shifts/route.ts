// POST /api/shifts { campaignId, title? }: opens a shift on a campaign (operators and analysts of its team).
import { z } from 'zod';
import { apiRoute, jsonResponse } from '@/lib/api/route';
import { getCampaignRef, openShift } from '@/lib/db/queries/campaigns';
import { AppError } from '@/lib/errors';
import { authorize, can } from '@/lib/policy';

export const dynamic = 'force-dynamic';

const CHOOSE_CAMPAIGN = 'Choose the campaign this shift belongs to.';
const openShiftBody = z.object({
  campaignId: z.coerce.number({ error: CHOOSE_CAMPAIGN }).int(CHOOSE_CAMPAIGN).positive(CHOOSE_CAMPAIGN),
  title: z
    .string()
    .trim()
    .max(160, 'The title may have at most 160 characters.')
    .optional()
    .transform((v) => (v ? v : null)),
});

function defaultTitle(now = new Date()): string {
  const d = now.toISOString().slice(0, 10);
  const h = now.getUTCHours();
  return `Shift ${d} ${h < 12 ? 'morning' : h < 18 ? 'afternoon' : 'night'}`;
}

export const POST = apiRoute({ body: openShiftBody }, async ({ actor, body, ip }) => {
  const campaign = await getCampaignRef({ campaignId: body.campaignId });
  // Another team's campaign looks the same as a missing one, unless the caller may see its metadata.
  if (!campaign || !can(actor, 'campaign.view', { teamId: campaign.teamId })) {
    throw new AppError('not_found:campaign', {
      details: ['campaignId: There is no such campaign in your teams.'],
      // an existing campaign of another team: audited like a 403 (lib/api/route.ts), answered like a missing one
      context: campaign ? { action: 'shift.open', teamId: campaign.teamId, hiddenRefusal: true } : undefined,
    });
  }
  authorize(actor, 'shift.open', { teamId: campaign.teamId });
  if (campaign.status !== 'active') {
    throw new AppError('conflict:campaign', {
      message: 'This campaign is closed; shifts can only be opened on active campaigns.',
    });
  }
  const { id } = await openShift(
    { campaignId: campaign.id, teamId: campaign.teamId, title: body.title ?? defaultTitle() },
    { userId: actor.userId, email: actor.email, ip },
  );
  return jsonResponse({ shift: { id, campaignId: campaign.id, teamId: campaign.teamId } }, { status: 201 });
});
