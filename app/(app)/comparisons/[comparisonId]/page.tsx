import type { Metadata } from 'next';
import { forbidden, notFound } from 'next/navigation';
import { SavedComparisonView } from '@/components/comparison/comparisons-home';
import { requireActor } from '@/lib/auth/actor';
import { comparisonSlug } from '@/lib/comparison/spec';
import { getSavedComparison } from '@/lib/db/queries/comparison';
import { isAppError } from '@/lib/errors';
import { can } from '@/lib/policy';

export const metadata: Metadata = { title: 'Saved comparison' };

// A saved comparison under its stable address. Access is checked here (members of its team who read results) and
// again by the API, which also lists the parts the viewer may no longer read as hidden.
export default async function SavedComparisonPage({ params }: { params: Promise<{ comparisonId: string }> }) {
  const { comparisonId } = await params;
  if (!comparisonSlug.safeParse(comparisonId).success) notFound();
  const actor = await requireActor();
  let teamId: number;
  try {
    teamId = (await getSavedComparison({ slug: comparisonId })).teamId;
  } catch (err) {
    if (isAppError(err) && err.type === 'not_found') notFound();
    throw err;
  }
  if (!can(actor, 'team.view', { teamId })) notFound();
  if (!can(actor, 'result.view', { teamId })) forbidden();
  const saveTeams = actor.memberships
    .filter((m) => can(actor, 'comparison.create', { teamId: m.teamId }))
    .map((m) => ({ teamId: m.teamId, teamName: m.teamName }));
  return <SavedComparisonView id={comparisonId} saveTeams={saveTeams} />;
}
