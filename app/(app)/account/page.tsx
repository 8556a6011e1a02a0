import type { Metadata } from 'next';
import { ChangePasswordForm } from '@/components/auth/change-password-form';
import { PageHeader } from '@/components/ui/page-header';
import { requireActor } from '@/lib/auth/actor';

export const metadata: Metadata = { title: 'Your account' };
export const dynamic = 'force-dynamic';

// The signed-in user's own account: who they are and a new password. No role is needed to see or use it.
export default async function AccountPage() {
  const actor = await requireActor();
  return (
    <>
      <PageHeader
        eyebrow="Account"
        title={actor.name}
        description={`Signed in as ${actor.email}. Changing the password signs you out everywhere else.`}
      />
      <div className="max-w-md rounded-panel bg-white p-6 shadow-sm ring-1 ring-ink-100">
        <h2 className="mb-4 text-body font-semibold text-ink-900">Change your password</h2>
        <ChangePasswordForm />
      </div>
    </>
  );
}
