import type { Metadata } from 'next';
import { forbidden } from 'next/navigation';
import { UsersAdmin } from '@/components/admin/users-admin';
import { PageHeader } from '@/components/ui/page-header';
import { requireActor } from '@/lib/auth/actor';
import { can } from '@/lib/policy';

export const metadata: Metadata = { title: 'Users' };

export default async function AdminUsersPage() {
  const actor = await requireActor();
  if (!can(actor, 'admin.users')) forbidden(); // the sentence: REFUSALS in components/shell/forbidden.tsx
  return (
    <>
      <PageHeader
        eyebrow="Administration"
        title="Users and roles"
        description="Invite people, change their role in a team, grant facility roles, or deactivate an account. Every change is recorded in the audit trail."
      />
      <UsersAdmin selfId={actor.userId} />
    </>
  );
}
