import type { Metadata } from 'next';
import { HomeOverview } from '@/components/home/home-overview';
import { PageHeader } from '@/components/ui/page-header';
import { requireActor } from '@/lib/auth/actor';

export const metadata: Metadata = { title: 'Overview' };

export default async function HomePage() {
  const actor = await requireActor();
  const first = actor.name.split(/\s+/)[0] ?? actor.name;
  return (
    <>
      <PageHeader
        eyebrow="Overview"
        title={`Good to see you, ${first}`}
        description="Your teams, their campaigns and the shifts that are open right now."
      />
      <HomeOverview />
    </>
  );
}
