// Saved comparisons (issue 13, PRODUCT.md C8): GET lists those of the caller's teams (result readers); POST saves
// one for a team where the caller may create comparisons (the PI), after checking that the caller may read every
// campaign and scan in it.
import { z } from 'zod';
import { apiRoute, jsonResponse } from '@/lib/api/route';
import { recordAudit } from '@/lib/audit';
import { authorizeSelection } from '@/lib/comparison/points';
import { saveComparisonBody } from '@/lib/comparison/spec';
import { createSavedComparison, listSavedComparisons } from '@/lib/db/queries/comparison';
import { authorize, teamsWhere } from '@/lib/policy';

export const GET = apiRoute({}, async ({ actor }) => {
  authorize(actor, 'result.view');
  return { comparisons: await listSavedComparisons({ teamIds: teamsWhere(actor, 'result.view') }) };
});

export const POST = apiRoute(
  { body: saveComparisonBody.extend({ note: z.string().trim().max(2000, 'at most 2000 characters').nullish() }) },
  async ({ actor, body, ip }) => {
    authorize(actor, 'comparison.create', { teamId: body.teamId, surface: 'api' });
    await authorizeSelection(actor, { campaigns: body.spec.selection.campaignIds, scans: body.spec.selection.scanIds });
    const saved = await createSavedComparison({
      teamId: body.teamId,
      title: body.title,
      note: body.note ?? null,
      spec: body.spec,
      userId: actor.userId,
    });
    await recordAudit({
      action: 'comparison.saved',
      actorId: actor.userId,
      actorEmail: actor.email,
      teamId: body.teamId,
      ip,
      outcome: 'ok',
      targetType: 'comparison',
      targetId: saved.id,
      details: { title: saved.title },
    });
    // RFC 9110 §15.3.2: a request that created a resource answers 201 Created.
    return jsonResponse({ comparison: saved }, { status: 201 });
  },
);
