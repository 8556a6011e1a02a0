import { forbidden, notFound, redirect } from 'next/navigation';
import { CalibrationView } from '@/components/calibration/calibration-view';
import { getActor } from '@/lib/auth/actor';
import { getCampaignTeamId } from '@/lib/db/queries/scans';
import { isAppError } from '@/lib/errors';
import { can } from '@/lib/policy';

export const metadata = { title: 'Calibration and settings' };

// Versions of the campaign's detector calibration and analysis settings: edit (analysts), approve (PI).
export default async function CalibrationPage({ params }: { params: Promise<{ campaignId: string }> }) {
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
  if (!can(actor, 'calibration.view', { teamId })) {
    // a campaign the actor may see (a steward reads its metadata) answers 403 with a sentence; any other 404
    if (can(actor, 'campaign.view', { teamId })) forbidden(); // the sentence: app/(app)/forbidden.tsx
    notFound();
  }
  return <CalibrationView campaignId={id} />;
}
