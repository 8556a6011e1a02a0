/**
 * The one place that decides who may do what (PRODUCT.md "Who uses it").
 *
 * Every route handler, server page and server action asks `authorize(actor, action, scope)` (or `can(...)` to
 * decide what to show). Roles are never compared anywhere else. Team actions need a membership in the team that
 * owns the object (`scope.teamId`); facility actions need a facility role. A steward may read the *metadata* of
 * every team (`*.metadata` actions) but never results, images or anything that edits; an admin manages users,
 * teams and memberships and nothing else by default.
 *
 * The table is pure data and has no server-only imports, so client components may read it to hide buttons;
 * the server still has the final say.
 */
import { AppError } from './errors';

// TYPES //

export const TEAM_ROLES = ['operator', 'analyst', 'pi'] as const;
export type TeamRole = (typeof TEAM_ROLES)[number];
export const FACILITY_ROLES = ['steward', 'admin'] as const;
export type FacilityRole = (typeof FACILITY_ROLES)[number];

/** The signed-in user as the server sees it (from the session, re-read from the database). */
export interface Actor {
  userId: number;
  email: string;
  name: string;
  memberships: { teamId: number; teamSlug: string; teamName: string; role: TeamRole }[];
  facilityRoles: FacilityRole[];
}

/** Actions on objects owned by a team. */
export const TEAM_ACTIONS = [
  // reading
  'team.view',
  'campaign.view',
  'shift.view',
  'scan.view',
  'result.view',
  'rawfile.view',
  'calibration.view',
  'audit.view',
  // operating a shift
  'shift.open',
  'shift.close',
  'shift.log',
  'upload.create',
  // analysing
  'campaign.create',
  'campaign.edit',
  'calibration.edit',
  'reduction.start',
  'scan.flag',
  'quarantine.release',
  // PI
  'calibration.approve',
  'comparison.create',
  'export.create',
  // campaign citation metadata and citation records (C10, issue 14): every member reads them and downloads the
  // records, the PI edits them; the steward does both for every team (FACILITY_EQUIVALENTS below)
  'citation.view',
  'citation.edit',
  // the second step of a deletion a data steward asked for (C10, issue 14): the team's PI confirms it
  'deletion.approve',
  // public landing pages (C10, issue 14): the PI publishes or withdraws the campaign's page; stewards for every team
  'landing.publish',
  // archive and restore (C10, issue 14): the team's PI may ask for an archived file of the team to be restored (a
  // restore copies bytes back, it loses nothing); archiving stays with the data stewards ('archive.manage')
  'archive.restore',
  // calibration bench (C7, issue 15): run the fitting tools on a scan's raw frames server-side (nothing is stored);
  // analysts tune calibrations, the PI checks them before approving. Not the steward (images). The frames themselves
  // (GET /api/scans/[scanId]/raw-frame) are read with 'result.view'.
  'bench.use',
] as const;
export type TeamAction = (typeof TEAM_ACTIONS)[number];

/** Actions that need a facility role. */
export const FACILITY_ACTIONS = [
  // steward: metadata of every team, stewardship
  'campaign.metadata',
  'scan.metadata',
  'rawfile.metadata',
  'archive.manage',
  'retention.manage',
  'fixity.run',
  'deletion.request',
  'citation.export',
  'audit.view.all',
  // campaign citation metadata (C10, issue 14): the steward edits it for every team
  'citation.curate',
  // admin
  'admin.users',
  'admin.teams',
  'admin.memberships',
  'admin.audit',
  'admin.mailbox',
  // the second step of a deletion a data steward asked for (C10, issue 14): an administrator confirms it
  'deletion.approve.any',
  // public landing pages (C10, issue 14): a data steward publishes or withdraws any campaign's page
  'landing.curate',
] as const;
export type FacilityAction = (typeof FACILITY_ACTIONS)[number];

export type Action = TeamAction | FacilityAction;

// TABLES //

const OPERATOR: readonly TeamAction[] = [
  'team.view',
  'campaign.view',
  'shift.view',
  'scan.view',
  'result.view',
  'rawfile.view',
  'calibration.view',
  'shift.open',
  'shift.close',
  'shift.log',
  'upload.create',
  'citation.view',
];

const ANALYST: readonly TeamAction[] = [
  ...OPERATOR,
  'campaign.create',
  'campaign.edit',
  'calibration.edit',
  'reduction.start',
  'scan.flag',
  'quarantine.release',
  // calibration bench (C7, issue 15)
  'bench.use',
];

const PI: readonly TeamAction[] = [
  'team.view',
  'campaign.view',
  'shift.view',
  'scan.view',
  'result.view',
  'rawfile.view',
  'calibration.view',
  'audit.view',
  'campaign.create',
  'campaign.edit',
  'calibration.approve',
  'comparison.create',
  'export.create',
  'citation.view',
  'citation.edit',
  'deletion.approve',
  'landing.publish',
  'archive.restore',
  // calibration bench (C7, issue 15): the PI re-runs a tool to check a draft before approving it
  'bench.use',
];

/** What each team role may do in its own team. */
export const PERMISSIONS_BY_TEAM_ROLE: Record<TeamRole, ReadonlySet<TeamAction>> = {
  operator: new Set(OPERATOR),
  analyst: new Set(ANALYST),
  pi: new Set(PI),
};

/** What each facility role may do, for every team. */
export const PERMISSIONS_BY_FACILITY_ROLE: Record<FacilityRole, ReadonlySet<FacilityAction>> = {
  steward: new Set<FacilityAction>([
    'campaign.metadata',
    'scan.metadata',
    'rawfile.metadata',
    'archive.manage',
    'retention.manage',
    'fixity.run',
    'deletion.request',
    'citation.export',
    'audit.view.all',
    'citation.curate',
    'landing.curate',
  ]),
  admin: new Set<FacilityAction>([
    'admin.users',
    'admin.teams',
    'admin.memberships',
    'admin.audit',
    'admin.mailbox',
    'deletion.approve.any',
  ]),
};

/** Team actions a facility role may perform on any team (read-only metadata views for stewards). */
const FACILITY_EQUIVALENTS: Partial<Record<TeamAction, FacilityAction>> = {
  'team.view': 'campaign.metadata',
  'campaign.view': 'campaign.metadata',
  'shift.view': 'campaign.metadata',
  // campaign citation metadata (C10, issue 14)
  'citation.view': 'citation.export',
  'citation.edit': 'citation.curate',
  // public landing pages (C10, issue 14)
  'landing.publish': 'landing.curate',
  // archive and restore (C10, issue 14): stewards restore every team's files
  'archive.restore': 'archive.manage',
};

// FUNCTIONS //

export function isTeamAction(action: Action): action is TeamAction {
  return (TEAM_ACTIONS as readonly string[]).includes(action);
}

/** The actor's role in a team, or null. */
export function roleInTeam(actor: Actor | null, teamId: number): TeamRole | null {
  return actor?.memberships.find((m) => m.teamId === teamId)?.role ?? null;
}

export function hasFacilityAction(actor: Actor | null, action: FacilityAction): boolean {
  return !!actor?.facilityRoles.some((role) => PERMISSIONS_BY_FACILITY_ROLE[role].has(action));
}

/**
 * Whether `actor` may perform `action`. Team actions need `scope.teamId` (the team that owns the object); without
 * it they ask "in at least one team" (used to show or hide navigation).
 */
export function can(actor: Actor | null, action: Action, scope: { teamId?: number | null } = {}): boolean {
  if (!actor) return false;
  if (!isTeamAction(action)) return hasFacilityAction(actor, action);
  const teamId = scope.teamId;
  if (teamId === undefined || teamId === null) {
    return actor.memberships.some((m) => PERMISSIONS_BY_TEAM_ROLE[m.role].has(action));
  }
  const role = roleInTeam(actor, teamId);
  if (role && PERMISSIONS_BY_TEAM_ROLE[role].has(action)) return true;
  const equivalent = FACILITY_EQUIVALENTS[action];
  return equivalent ? hasFacilityAction(actor, equivalent) : false;
}

/** Teams in which the actor may perform a team action. */
export function teamsWhere(actor: Actor | null, action: TeamAction): number[] {
  if (!actor) return [];
  return actor.memberships.filter((m) => PERMISSIONS_BY_TEAM_ROLE[m.role].has(action)).map((m) => m.teamId);
}

/**
 * Throws unless `actor` may perform `action`: 401 without a session, 403 with a plain sentence otherwise.
 * The refusal reason is attached for the audit trail (lib/audit.ts records refusals).
 */
export function authorize(
  actor: Actor | null,
  action: Action,
  scope: { teamId?: number | null; surface?: 'api' | 'scan' | 'campaign' | 'shift' | 'upload' | 'admin' } = {},
): asserts actor is Actor {
  if (!actor) throw new AppError('unauthorized:auth');
  if (can(actor, action, scope)) return;
  const inTeam = scope.teamId != null && roleInTeam(actor, scope.teamId) !== null;
  const message = isTeamAction(action)
    ? inTeam
      ? `Your role in this team does not allow this (${describeAction(action)}).`
      : 'This belongs to a team you are not a member of.'
    : `This needs a facility role that your account does not have (${describeAction(action)}).`;
  throw new AppError(action.startsWith('admin.') ? 'forbidden:admin' : 'forbidden:auth', {
    message,
    context: { action, teamId: scope.teamId ?? null, userId: actor.userId },
  });
}

/** Surfaces of objects addressed by id (their `not_found:*` code is the answer for callers who may not see them). */
export type ObjectSurface = 'campaign' | 'shift' | 'scan' | 'upload' | 'calibration' | 'settings';

/**
 * `authorize` for an object of team `scope.teamId` that the caller addressed by its id. Someone who may not even
 * see that team's objects (no membership, no facility role that reads every team's metadata) gets the same 404 as
 * for an id that does not exist, so another team's ids reveal nothing; everyone else gets authorize's answer
 * (401 without a session, 403 when the object is visible but the action is not allowed).
 */
export function authorizeObject(
  actor: Actor | null,
  action: Action,
  scope: { teamId: number; surface: ObjectSurface },
): asserts actor is Actor {
  if (actor && !can(actor, 'team.view', { teamId: scope.teamId })) {
    // `hiddenRefusal`: lib/api/route.ts records it in the audit trail like a 403.
    throw new AppError(`not_found:${scope.surface}`, {
      context: { action, teamId: scope.teamId, userId: actor.userId, hiddenRefusal: true },
    });
  }
  authorize(actor, action, {
    teamId: scope.teamId,
    surface: scope.surface === 'calibration' || scope.surface === 'settings' ? 'campaign' : scope.surface,
  });
}

// PUBLIC LANDING PAGES (C10, issue 14) //

/**
 * What anyone may see without signing in, on a campaign's public landing page (/data/<public id>):
 * `landing.read` the citation metadata, only once a PI or steward has published the page ('landing.publish');
 * `landing.files` the file list (names, sizes, checksums), only on a published page whose campaign is not under
 * embargo. Results, images and maps are never public. Nothing is public by default.
 */
export const PUBLIC_ACTIONS = ['landing.read', 'landing.files'] as const;
export type PublicAction = (typeof PUBLIC_ACTIONS)[number];

export interface PublicSubject {
  /** Whether the landing page is published now. */
  published: boolean;
  /** The campaign's embargo (YYYY-MM-DD, the first day the files are open) or null. */
  embargoUntil: string | null;
  /** Today, YYYY-MM-DD (UTC). */
  today: string;
}

export function canPublic(action: PublicAction, subject: PublicSubject): boolean {
  if (!subject.published) return false;
  if (action === 'landing.read') return true;
  return !subject.embargoUntil || subject.embargoUntil <= subject.today;
}

/** Throws the 404 of a campaign that does not exist unless anyone may perform `action` (so nothing is revealed). */
export function authorizePublic(action: PublicAction, subject: PublicSubject | null): asserts subject is PublicSubject {
  if (subject && canPublic(action, subject)) return;
  throw new AppError('not_found:campaign', {
    message: 'There is no public page at this address.',
    context: { action, publicRefusal: true },
  });
}

/** Actions on the signed-in user's own account (C11: which e-mails they get). */
export const OWN_ACCOUNT_ACTIONS = ['account.notifications'] as const;
export type OwnAccountAction = (typeof OWN_ACCOUNT_ACTIONS)[number];

/**
 * Throws unless `actor` may perform an own-account action on the account `ownerUserId`: every signed-in user may,
 * on their own account only (401 without a session, 403 for anyone else's, administrators included).
 */
export function authorizeOwn(
  actor: Actor | null,
  action: OwnAccountAction,
  ownerUserId: number,
): asserts actor is Actor {
  if (!actor) throw new AppError('unauthorized:auth');
  if (actor.userId === ownerUserId) return;
  throw new AppError('forbidden:auth', {
    message: 'Only the account holder chooses their own e-mail notifications.',
    context: { action, userId: actor.userId, ownerUserId },
  });
}

const ACTION_WORDS: Partial<Record<Action, string>> = {
  'shift.open': 'opening a shift',
  'shift.close': 'closing a shift',
  'upload.create': 'uploading files',
  'campaign.create': 'creating a campaign',
  'calibration.edit': 'editing calibrations',
  'calibration.approve': 'approving calibrations',
  'reduction.start': 'starting reductions',
  'quarantine.release': 'releasing quarantined files',
  'admin.users': 'managing users',
  'admin.teams': 'managing teams',
  'admin.memberships': 'managing memberships',
  'archive.manage': 'archiving and restoring stored files',
  'archive.restore': 'asking for an archived file to be restored',
  'fixity.run': 'fixity checks of stored files',
};

export function describeAction(action: Action): string {
  return ACTION_WORDS[action] ?? action.replace('.', ' ');
}
