import { notFound, redirect } from 'next/navigation';
import { FileRegister } from '@/components/stewardship/file-register';
import { getActor } from '@/lib/auth/actor';
import { can } from '@/lib/policy';

export const metadata = { title: 'File register' };

// The data steward's register of every team's stored files (C10). Access is checked here; data via the API.
export default async function StewardshipPage() {
  const actor = await getActor();
  if (!actor) redirect('/sign-in');
  if (!can(actor, 'rawfile.metadata')) notFound();
  return <FileRegister />;
}
