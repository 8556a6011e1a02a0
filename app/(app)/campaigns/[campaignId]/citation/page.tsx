import { notFound, redirect } from 'next/navigation';
import { CitationEditor } from '@/components/stewardship/citation-editor';
import { getActor } from '@/lib/auth/actor';
import { getCampaignTeamId } from '@/lib/db/queries/scans';
import { isAppError } from '@/lib/errors';
import { can } from '@/lib/policy';

export const metadata = { title: 'Citation record' };

// A campaign's citation metadata and records (C10). Access is checked here; the data come from the API.
export default async function CitationPage({ params }: { params: Promise<{ campaignId: string }> }) {
  const { campaignId } = await params;
  const id = Number(campaignId);
  if (!Number.isInteger(id) || id <= 0) notFound();
  const actor = await getActor();
  if (!actor) redirect('/sign-in');
  let teamId: number;
  try {
    teamId = await getCampaignTeamId({ campaignId: id });
  } catch (err) {
    if (isAppError(err) && err.type === 'not_found') notFound();
    throw err;
  }
  if (!can(actor, 'citation.view', { teamId })) notFound();
  return <CitationEditor campaignId={id} />;
}
