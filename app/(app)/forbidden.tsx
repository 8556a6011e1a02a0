import { headers } from 'next/headers';
import { Forbidden } from '@/components/shell/forbidden';
import { getActor } from '@/lib/auth/actor';
import { getCurrentTeamId } from '@/lib/auth/current-team';
import { describeAction } from '@/lib/policy';

// HTTP 403 inside the signed-in frame. Pages call next/navigation's forbidden() before anything streams; Next
// renders this boundary alongside the page, so the sentence is chosen here from the address (set by proxy.ts).

async function teamPart(what: string): Promise<string> {
  const actor = await getActor();
  if (!actor) return '';
  const teamId = await getCurrentTeamId(actor);
  const team = actor.memberships.find((m) => m.teamId === teamId);
  return team ? `; your role in ${team.teamName} does not include ${what}` : '';
}

const REFUSALS: Record<string, () => string | Promise<string>> = {
  '/admin/users': () => 'Only administrators manage users, invitations and roles.',
  '/admin/teams': () => 'Only administrators create and manage teams.',
  '/admin/audit': () => 'The audit trail is open to PIs (for their teams), data stewards and administrators.',
  '/admin/mailbox': () => 'Only administrators read the development mailbox.',
  '/campaigns/new': async () =>
    `Creating a campaign is for analysts and PIs of a team${await teamPart(describeAction('campaign.create'))}.`,
  '/shifts/new': async () => `Opening a shift is for operators and analysts of a team${await teamPart('it')}.`,
};

/** Refusals of addresses with an id in them. */
const PATTERNS: [RegExp, () => string][] = [
  [
    /^\/campaigns\/\d+\/calibration$/,
    () => 'Calibrations and analysis settings are for the team’s members; data stewards see the campaign’s metadata.',
  ],
];

export default async function ForbiddenPage() {
  const path = ((await headers()).get('x-lobeline-path') ?? '').replace(/\/+$/, '') || '/';
  const sentence = REFUSALS[path] ?? PATTERNS.find(([re]) => re.test(path))?.[1];
  return <Forbidden message={sentence ? await sentence() : 'Your roles do not include this page.'} />;
}
