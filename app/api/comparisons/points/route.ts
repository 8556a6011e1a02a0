// GET /api/comparisons/points?campaigns=1,2&scans=7&convention=…&targets=…: the step points of the current results
// of the chosen campaigns and scans (issue 13), each with its provenance; every campaign and scan is checked through
// lib/policy.ts (result.view in its own team). Mixed intensity conventions are converted to `convention` or refused.
import { apiRoute } from '@/lib/api/route';
import { authorizeSelection, comparisonPoints } from '@/lib/comparison/points';
import { pointsQuerySchema } from '@/lib/comparison/spec';

export const GET = apiRoute({ query: pointsQuerySchema }, async ({ actor, query }) => {
  await authorizeSelection(actor, query);
  return comparisonPoints(query);
});
