import { notFound, redirect } from 'next/navigation';
import { FixityReport } from '@/components/stewardship/fixity-report';
import { getActor } from '@/lib/auth/actor';
import { can } from '@/lib/policy';

export const metadata = { title: 'Fixity report' };

// The data steward's fixity report (C10/C11): coverage of the rolling re-hash plan and every failed check.
export default async function FixityPage() {
  const actor = await getActor();
  if (!actor) redirect('/sign-in');
  if (!can(actor, 'fixity.run')) notFound();
  return <FixityReport />;
}
