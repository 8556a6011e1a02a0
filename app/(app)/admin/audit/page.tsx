import type { Metadata } from 'next';
import { forbidden } from 'next/navigation';
import { AuditTrail } from '@/components/admin/audit-trail';
import { PageHeader } from '@/components/ui/page-header';
import { requireActor } from '@/lib/auth/actor';
import { listAuditCampaigns } from '@/lib/db/queries/accounts';
import { can, teamsWhere } from '@/lib/policy';

export const metadata: Metadata = { title: 'Audit trail' };

export default async function AuditPage() {
  const actor = await requireActor();
  const all = can(actor, 'audit.view.all') || can(actor, 'admin.audit');
  const teamIds = teamsWhere(actor, 'audit.view');
  if (!all && teamIds.length === 0) {
    forbidden(); // the sentence: REFUSALS in components/shell/forbidden.tsx
  }
  const teams = actor.memberships.filter((m) => teamIds.includes(m.teamId)).map((m) => m.teamName);
  const campaigns = await listAuditCampaigns({ teamIds: all ? 'all' : teamIds });
  return (
    <>
      <PageHeader
        eyebrow="Audit"
        title="Audit trail"
        description="Who signed in, changed access, uploaded, calibrated, reduced, approved, archived, restored or deleted what, and when, with the checksum of the file concerned."
      />
      <AuditTrail
        scopeNote={
          all
            ? 'Every event of the facility. Events name what was done, never a result.'
            : `Events of ${teams.join(' and ')}.`
        }
        campaigns={campaigns}
      />
    </>
  );
}
