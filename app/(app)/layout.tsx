import { redirect } from 'next/navigation';
import type { ReactNode } from 'react';
import { AppHeader } from '@/components/shell/app-header';
import { getActor } from '@/lib/auth/actor';
import { getCurrentTeamId } from '@/lib/auth/current-team';

// Every page of the signed-in app: the header (product name, navigation, team switcher, user menu) and a main
// column. Pages still check their own access through lib/policy; this layout only requires a session.
export default async function AppLayout({ children }: { children: ReactNode }) {
  const actor = await getActor();
  if (!actor) redirect('/sign-in');
  const currentTeamId = await getCurrentTeamId(actor);
  return (
    <div className="flex min-h-screen flex-col">
      <AppHeader actor={actor} currentTeamId={currentTeamId} />
      <main id="main" className="mx-auto w-full max-w-7xl flex-1 px-4 py-8 sm:px-6">
        {children}
      </main>
      <footer className="border-t border-ink-200 bg-white">
        <div className="mx-auto flex max-w-7xl flex-wrap items-center justify-between gap-2 px-4 py-3 text-micro text-ink-500 sm:px-6">
          <span>Lobeline · Harbor Point Ultrafast Lab</span>
          <span>
            Lobeline controls no hardware. Lasers, high voltage and vacuum follow your lab&apos;s safety rules.
          </span>
        </div>
      </footer>
    </div>
  );
}
