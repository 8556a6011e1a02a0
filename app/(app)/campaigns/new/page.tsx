import type { Metadata } from 'next';
import { forbidden } from 'next/navigation';
import { CampaignForm } from '@/components/home/campaign-form';
import { PageHeader } from '@/components/ui/page-header';
import { Panel } from '@/components/ui/panel';
import { requireActor } from '@/lib/auth/actor';
import { getCurrentTeamId } from '@/lib/auth/current-team';
import { can } from '@/lib/policy';

export const metadata: Metadata = { title: 'New campaign' };

export default async function NewCampaignPage() {
  const actor = await requireActor();
  const teamId = await getCurrentTeamId(actor);
  const team = actor.memberships.find((m) => m.teamId === teamId);
  if (!teamId || !team || !can(actor, 'campaign.create', { teamId })) {
    forbidden(); // the sentence: app/(app)/forbidden.tsx
  }
  return (
    <div className="mx-auto max-w-2xl">
      <PageHeader
        eyebrow={team.teamName}
        title="New campaign"
        description="A campaign groups the shifts and scans of one target and wavelength, with its own calibration versions."
      />
      <Panel>
        <CampaignForm teamId={teamId} teamName={team.teamName} />
      </Panel>
    </div>
  );
}
