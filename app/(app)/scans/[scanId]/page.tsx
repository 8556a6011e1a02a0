import { notFound, redirect } from 'next/navigation';
import { ScanView } from '@/components/scans/scan-view';
import { getActor } from '@/lib/auth/actor';
import { getScanTeamId } from '@/lib/db/queries/scans';
import { isAppError } from '@/lib/errors';
import { can } from '@/lib/policy';

export const metadata = { title: 'Scan' };

// The scan page: access is checked here on the server; the data come from the JSON API (TanStack Query).
export default async function ScanPage({
  params,
  searchParams,
}: {
  params: Promise<{ scanId: string }>;
  searchParams: Promise<Record<string, string | string[] | undefined>>;
}) {
  const { scanId } = await params;
  const { download } = await searchParams;
  // Set by the result-file download route when it could not hand out the file (see its route.ts).
  const downloadProblem = download === 'missing' || download === 'unavailable' ? download : null;
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
  if (!can(actor, 'scan.view', { teamId }) && !can(actor, 'scan.metadata', { teamId })) notFound();
  return <ScanView scanId={id} downloadProblem={downloadProblem} />;
}
