// One saved comparison (issue 13) under its stable address /comparisons/[id]: GET re-checks access at every open —
// the comparison is visible to members of its team who may read results; inside it, each campaign or scan the
// viewer may no longer read is listed as hidden, not an error. DELETE: whoever may create comparisons in its team.
import { z } from 'zod';
import { apiRoute } from '@/lib/api/route';
import { recordAudit } from '@/lib/audit';
import { selectionAccess } from '@/lib/comparison/points';
import { comparisonSlug, comparisonSpecSchema } from '@/lib/comparison/spec';
import { deleteSavedComparison, getSavedComparison } from '@/lib/db/queries/comparison';
import { AppError } from '@/lib/errors';
import { type Action, type Actor, authorize, can } from '@/lib/policy';

const params = z.object({ comparisonId: comparisonSlug });

/** 404 unless the actor may see the comparison's team at all, then the policy check of `action` there. */
async function comparisonFor(actor: Actor, slug: string, action: Action) {
  const saved = await getSavedComparison({ slug });
  if (!can(actor, 'team.view', { teamId: saved.teamId })) {
    throw new AppError('not_found:comparison', {
      context: { action, teamId: saved.teamId, userId: actor.userId, hiddenRefusal: true },
    });
  }
  authorize(actor, action, { teamId: saved.teamId, surface: 'api' });
  return saved;
}

export const GET = apiRoute({ params }, async ({ actor, params }) => {
  const saved = await comparisonFor(actor, params.comparisonId, 'result.view');
  const parsed = comparisonSpecSchema.safeParse(saved.spec);
  if (!parsed.success) {
    throw new AppError('conflict:comparison', { message: 'This saved comparison could not be read; save it again.' });
  }
  const spec = parsed.data;
  const access = await selectionAccess(actor, spec.selection);
  return {
    comparison: { ...saved, spec },
    // what this viewer may draw, and what is hidden from them
    visible: { campaignIds: access.campaignIds, scanIds: access.scanIds },
    hidden: { campaignIds: access.hiddenCampaignIds, scanIds: access.hiddenScanIds },
    canDelete: can(actor, 'comparison.create', { teamId: saved.teamId }),
  };
});

export const DELETE = apiRoute({ params }, async ({ actor, params, ip }) => {
  const saved = await comparisonFor(actor, params.comparisonId, 'comparison.create');
  await deleteSavedComparison({ slug: saved.id });
  await recordAudit({
    action: 'comparison.deleted',
    actorId: actor.userId,
    actorEmail: actor.email,
    teamId: saved.teamId,
    ip,
    outcome: 'ok',
    targetType: 'comparison',
    targetId: saved.id,
    details: { title: saved.title },
  });
  return { ok: true };
});
