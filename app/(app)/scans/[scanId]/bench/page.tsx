import { forbidden, notFound, redirect } from 'next/navigation';
import { Suspense } from 'react';
import { BenchView } from '@/components/bench/bench-view';
import { LoadingBlock } from '@/components/ui';
import { getActor } from '@/lib/auth/actor';
import { getScanTeamId } from '@/lib/db/queries/scans';
import { isAppError } from '@/lib/errors';
import { can } from '@/lib/policy';

export const metadata = { title: 'Calibration bench' };

// The calibration bench of one scan (C7). `?calibration=<id>&settings=<id>` opens it with those versions (a draft
// the PI is asked to approve); without them it starts from the campaign's current versions.
export default async function BenchPage({ params }: { params: Promise<{ scanId: string }> }) {
  const { scanId } = await params;
  const id = Number(scanId);
  if (!Number.isInteger(id) || id <= 0) notFound();
  const actor = await getActor();
  if (!actor) redirect('/sign-in');
  let teamId: number;
  try {
    teamId = await getScanTeamId({ scanId: id });
  } catch (err) {
    if (isAppError(err) && err.type === 'not_found') notFound();
    throw err;
  }
  if (!can(actor, 'calibration.view', { teamId }) || !can(actor, 'result.view', { teamId })) {
    if (can(actor, 'scan.metadata', { teamId })) forbidden();
    notFound();
  }
  return (
    <Suspense fallback={<LoadingBlock lines={10} />}>
      <BenchView scanId={id} />
    </Suspense>
  );
}
