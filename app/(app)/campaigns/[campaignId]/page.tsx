import { notFound, redirect } from 'next/navigation';
import { CampaignView } from '@/components/campaign/campaign-view';
import { getActor } from '@/lib/auth/actor';
import { getCampaignTeamId } from '@/lib/db/queries/scans';
import { isAppError } from '@/lib/errors';
import { can } from '@/lib/policy';

export const metadata = { title: 'Campaign' };

// The campaign page: shifts, the server-paged scan table and the trend. Access is checked here; data via the API.
export default async function CampaignPage({ params }: { params: Promise<{ campaignId: string }> }) {
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
  if (!can(actor, 'campaign.view', { teamId })) notFound();
  return <CampaignView campaignId={id} />;
}
