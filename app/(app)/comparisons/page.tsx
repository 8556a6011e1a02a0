import type { Metadata } from 'next';
import { forbidden } from 'next/navigation';
import { ComparisonsHome } from '@/components/comparison/comparisons-home';
import { requireActor } from '@/lib/auth/actor';
import { can } from '@/lib/policy';

export const metadata: Metadata = { title: 'Compare campaigns' };

// The comparison page (issue 13): saved comparisons of the viewer's teams and a fresh one. Data via the API.
export default async function ComparisonsPage() {
  const actor = await requireActor();
  if (!can(actor, 'result.view')) forbidden();
  const saveTeams = actor.memberships
    .filter((m) => can(actor, 'comparison.create', { teamId: m.teamId }))
    .map((m) => ({ teamId: m.teamId, teamName: m.teamName }));
  return <ComparisonsHome saveTeams={saveTeams} />;
}
