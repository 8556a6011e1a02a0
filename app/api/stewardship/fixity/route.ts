// GET /api/stewardship/fixity: the fixity report (coverage of the rolling plan, oldest check, files whose last check
// failed, paged). POST {limit}: re-hash that many of the least-recently-checked files now, as a one-off job beside
// the schedule. Data stewards (lib/policy.ts 'fixity.run'). Catalogue metadata only. The request is audited.
import { apiRoute, jsonResponse } from '@/lib/api/route';
import { recordAudit } from '@/lib/audit';
import { fixityReport } from '@/lib/db/queries/fixity-report';
import { enqueueFixityRun } from '@/lib/jobs/fixity';
import { authorize } from '@/lib/policy';
import { fixityReportQuery, fixityRunBody } from '@/lib/stewardship/schemas';

export const dynamic = 'force-dynamic';

export const GET = apiRoute({ query: fixityReportQuery }, async ({ actor, query }) => {
  authorize(actor, 'fixity.run', { surface: 'api' });
  return { report: await fixityReport(query) };
});

export const POST = apiRoute({ body: fixityRunBody }, async ({ actor, body, ip }) => {
  authorize(actor, 'fixity.run', { surface: 'api' });
  const jobId = await enqueueFixityRun({ limit: body.limit, rawFileIds: body.rawFileIds, triggeredBy: actor.userId });
  await recordAudit({
    action: 'fixity.run_requested',
    actorId: actor.userId,
    actorEmail: actor.email,
    targetType: 'fixity',
    targetId: jobId,
    ip,
    details: { limit: body.limit, rawFileIds: body.rawFileIds ?? null },
  });
  return jsonResponse({ jobId, limit: body.limit, rawFileIds: body.rawFileIds ?? null }, { status: 202 });
});
