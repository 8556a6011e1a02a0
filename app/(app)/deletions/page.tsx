import { notFound, redirect } from 'next/navigation';
import { DeletionQueue } from '@/components/stewardship/deletion-queue';
import { getActor } from '@/lib/auth/actor';
import { can, teamsWhere } from '@/lib/policy';

export const metadata = { title: 'Deletions' };

// Deletions waiting for their second person (C10): stewards, administrators and PIs (their teams).
export default async function DeletionsPage() {
  const actor = await getActor();
  if (!actor) redirect('/sign-in');
  const all = can(actor, 'deletion.approve.any');
  const mine = teamsWhere(actor, 'deletion.approve');
  if (!all && mine.length === 0 && !can(actor, 'deletion.request')) notFound();
  return <DeletionQueue userId={actor.userId} mayConfirm={all ? 'all' : mine} />;
}
