// GET /api/comparisons/sources: the campaigns (with their reduced scans) of every team in which the caller may read
// results — a PI of two teams sees both — for picking what to compare.
import { apiRoute } from '@/lib/api/route';
import { comparisonSources } from '@/lib/db/queries/comparison';
import { authorize, teamsWhere } from '@/lib/policy';

export const GET = apiRoute({}, async ({ actor }) => {
  authorize(actor, 'result.view');
  return { campaigns: await comparisonSources({ teamIds: teamsWhere(actor, 'result.view') }) };
});
