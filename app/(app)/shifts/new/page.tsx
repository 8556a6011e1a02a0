import type { Metadata } from 'next';
import { forbidden } from 'next/navigation';
import { formatWavelength } from '@/components/home/labels';
import { ShiftForm } from '@/components/home/shift-form';
import { EmptyState } from '@/components/ui/empty-state';
import { PageHeader } from '@/components/ui/page-header';
import { Panel } from '@/components/ui/panel';
import { SafetyNotice } from '@/components/ui/safety-notice';
import { requireActor } from '@/lib/auth/actor';
import { getCurrentTeamId } from '@/lib/auth/current-team';
import { listCampaigns } from '@/lib/db/queries/campaigns';
import { can } from '@/lib/policy';

export const metadata: Metadata = { title: 'Open a shift' };

export default async function NewShiftPage({ searchParams }: { searchParams: Promise<{ campaignId?: string }> }) {
  const actor = await requireActor();
  const teamId = await getCurrentTeamId(actor);
  const team = actor.memberships.find((m) => m.teamId === teamId);
  if (!teamId || !team || !can(actor, 'shift.open', { teamId })) {
    forbidden(); // the sentence: app/(app)/forbidden.tsx
  }
  const campaigns = (await listCampaigns({ teamIds: [teamId] })).filter((c) => c.status === 'active');
  const requested = Number((await searchParams).campaignId);
  return (
    <div className="mx-auto max-w-2xl space-y-6">
      <PageHeader
        eyebrow={team.teamName}
        title="Open a shift"
        description="A shift collects the detector files, the log and the receipt of one stretch of beam time."
      />
      <SafetyNotice />
      <Panel>
        {campaigns.length === 0 ? (
          <EmptyState title="No active campaign">
            A shift belongs to a campaign. Ask an analyst or PI of {team.teamName} to create one first.
          </EmptyState>
        ) : (
          <ShiftForm
            campaigns={campaigns.map((c) => ({
              id: c.id,
              label: `${c.name} — ${c.target}, ${formatWavelength(c.wavelengthNm)}`,
            }))}
            defaultCampaignId={campaigns.some((c) => c.id === requested) ? requested : undefined}
          />
        )}
      </Panel>
    </div>
  );
}
