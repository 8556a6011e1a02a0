import Link from 'next/link';
import { type Actor, can } from '@/lib/policy';
import { Wordmark } from './logo';
import { type NavItem, NavLinks } from './nav-links';
import { SmallScreenMenu } from './small-screen-menu';
import { TeamSwitcher } from './team-switcher';
import { UserMenu } from './user-menu';

const FACILITY_ROLE_LABEL = { steward: 'Data steward (facility)', admin: 'Administrator (facility)' } as const;
const TEAM_ROLE_LABEL = { operator: 'operator', analyst: 'analyst', pi: 'PI' } as const;

/** Navigation entries the actor may use; the server pages check again. */
export function navItemsFor(actor: Actor, currentTeamId: number | null): NavItem[] {
  const scope = { teamId: currentTeamId };
  const items: NavItem[] = [{ href: '/', label: 'Overview' }];
  if (currentTeamId && can(actor, 'shift.open', scope)) items.push({ href: '/shifts/new', label: 'Open a shift' });
  if (currentTeamId && can(actor, 'campaign.create', scope))
    items.push({ href: '/campaigns/new', label: 'New campaign' });
  if (can(actor, 'result.view')) items.push({ href: '/comparisons', label: 'Compare' });
  if (can(actor, 'audit.view') || can(actor, 'audit.view.all') || can(actor, 'admin.audit')) {
    items.push({ href: '/admin/audit', label: 'Audit trail' });
  }
  // C10: the data steward's register of every team's stored files
  if (can(actor, 'rawfile.metadata')) items.push({ href: '/stewardship', label: 'File register' });
  else if (can(actor, 'deletion.approve') || can(actor, 'deletion.approve.any'))
    items.push({ href: '/deletions', label: 'Deletions' });
  if (can(actor, 'admin.users')) items.push({ href: '/admin/users', label: 'Users' });
  if (can(actor, 'admin.teams')) items.push({ href: '/admin/teams', label: 'Teams' });
  if (can(actor, 'admin.mailbox') && process.env.MAIL_CATCHER_DIR)
    items.push({ href: '/admin/mailbox', label: 'Sent notices' });
  return items;
}

export function roleLines(actor: Actor): string[] {
  return [
    ...actor.memberships.map((m) => `${m.teamName}: ${TEAM_ROLE_LABEL[m.role]}`),
    ...actor.facilityRoles.map((r) => FACILITY_ROLE_LABEL[r]),
  ];
}

export function AppHeader({ actor, currentTeamId }: { actor: Actor; currentTeamId: number | null }) {
  const teams = [...actor.memberships]
    .sort((a, b) => a.teamName.localeCompare(b.teamName))
    .map((m) => ({ teamId: m.teamId, teamName: m.teamName, role: TEAM_ROLE_LABEL[m.role] }));
  const items = navItemsFor(actor, currentTeamId);
  return (
    <header className="sticky top-0 z-20 border-b border-ink-200 bg-white/95 backdrop-blur">
      <div className="relative mx-auto flex h-14 max-w-7xl items-center gap-3 px-4 sm:gap-4 sm:px-6">
        <Link
          href="/"
          className="shrink-0 rounded-md focus-visible:outline-2 focus-visible:outline-lobe-500"
          aria-label="Lobeline overview"
        >
          <Wordmark />
        </Link>
        <div className="hidden h-6 w-px bg-ink-200 md:block" aria-hidden="true" />
        <div className="hidden min-w-0 flex-1 md:block">
          <NavLinks items={items} />
        </div>
        <div className="flex-1 md:hidden" />
        <div className="hidden md:block">
          <TeamSwitcher teams={teams} currentTeamId={currentTeamId} />
        </div>
        <SmallScreenMenu items={items}>
          <TeamSwitcher teams={teams} currentTeamId={currentTeamId} />
        </SmallScreenMenu>
        <UserMenu name={actor.name} email={actor.email} roles={roleLines(actor)} />
      </div>
    </header>
  );
}
