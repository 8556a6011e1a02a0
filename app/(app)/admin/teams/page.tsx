import type { Metadata } from 'next';
import { forbidden } from 'next/navigation';
import { TeamsAdmin } from '@/components/admin/teams-admin';
import { PageHeader } from '@/components/ui/page-header';
import { requireActor } from '@/lib/auth/actor';
import { can } from '@/lib/policy';

export const metadata: Metadata = { title: 'Teams' };

export default async function AdminTeamsPage() {
  const actor = await requireActor();
  if (!can(actor, 'admin.teams')) forbidden(); // the sentence: REFUSALS in components/shell/forbidden.tsx
  return (
    <>
      <PageHeader
        eyebrow="Administration"
        title="Teams"
        description="Groups that own campaigns, shifts, files and results."
      />
      <TeamsAdmin />
    </>
  );
}
