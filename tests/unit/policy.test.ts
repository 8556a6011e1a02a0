// The role × action table of PRODUCT.md ("Who uses it"), written out here independently of lib/policy.ts and
// checked against it: every team role in its own team, the same roles on another team (always refused), the
// steward (metadata of every team, stewardship, never results or edits) and the admin (accounts only).
import { describe, expect, it } from 'vitest';
import { AppError } from '@/lib/errors';
import {
  type Actor,
  authorize,
  authorizeObject,
  can,
  FACILITY_ACTIONS,
  type FacilityAction,
  type FacilityRole,
  TEAM_ACTIONS,
  type TeamAction,
  type TeamRole,
  teamsWhere,
} from '@/lib/policy';

const OWN = 1;
const OTHER = 2;

function actor(memberships: [number, TeamRole][], facilityRoles: FacilityRole[] = []): Actor {
  return {
    userId: 7,
    email: 'x@example.test',
    name: 'X',
    memberships: memberships.map(([teamId, role]) => ({
      teamId,
      teamSlug: `t${teamId}`,
      teamName: `T${teamId}`,
      role,
    })),
    facilityRoles,
  };
}

// From PRODUCT.md: O = operator, A = analyst, P = pi. "Everything an operator may" carries over to analysts;
// PIs read everything of the team, approve calibrations, compare and export, and see the audit trail (C13).
const TEAM_TABLE: Record<TeamAction, { operator: boolean; analyst: boolean; pi: boolean }> = {
  'team.view': { operator: true, analyst: true, pi: true },
  'campaign.view': { operator: true, analyst: true, pi: true },
  'shift.view': { operator: true, analyst: true, pi: true },
  'scan.view': { operator: true, analyst: true, pi: true },
  'result.view': { operator: true, analyst: true, pi: true },
  'rawfile.view': { operator: true, analyst: true, pi: true },
  'calibration.view': { operator: true, analyst: true, pi: true },
  'audit.view': { operator: false, analyst: false, pi: true },
  'shift.open': { operator: true, analyst: true, pi: false },
  'shift.close': { operator: true, analyst: true, pi: false },
  'shift.log': { operator: true, analyst: true, pi: false },
  'upload.create': { operator: true, analyst: true, pi: false },
  'campaign.create': { operator: false, analyst: true, pi: true },
  'campaign.edit': { operator: false, analyst: true, pi: true },
  'calibration.edit': { operator: false, analyst: true, pi: false },
  'reduction.start': { operator: false, analyst: true, pi: false },
  'scan.flag': { operator: false, analyst: true, pi: false },
  'quarantine.release': { operator: false, analyst: true, pi: false },
  'calibration.approve': { operator: false, analyst: false, pi: true },
  'comparison.create': { operator: false, analyst: false, pi: true },
  'export.create': { operator: false, analyst: false, pi: true },
  // C10 (issue 14): citation metadata is read by the team and edited by its PI (and by stewards, below)
  'citation.view': { operator: true, analyst: true, pi: true },
  'citation.edit': { operator: false, analyst: false, pi: true },
  // C10 (issue 14): a deletion a steward asked for is confirmed by the team's PI (or an administrator, below)
  'deletion.approve': { operator: false, analyst: false, pi: true },
  // C10 (issue 14): the team's PI publishes or withdraws the campaign's public landing page (and stewards, below)
  'landing.publish': { operator: false, analyst: false, pi: true },
  // C10 (issue 14): the team's PI may have an archived file restored (stewards too, below); nobody of a team archives
  'archive.restore': { operator: false, analyst: false, pi: true },
  // C7 (issue 15): the calibration bench reads raw frames (images): analysts tune, the PI checks before approving
  'bench.use': { operator: false, analyst: true, pi: true },
};

/** Team actions a steward may perform on any team: reading catalogue metadata only. */
const STEWARD_TEAM_ACTIONS: TeamAction[] = [
  'team.view',
  'campaign.view',
  'shift.view',
  // C10: the steward reads and edits every campaign's citation metadata (PRODUCT.md: stewards export citations)
  'citation.view',
  'citation.edit',
  // C10: the steward publishes or withdraws any campaign's public landing page
  'landing.publish',
  // C10 (issue 14): stewards restore every team's archived files
  'archive.restore',
];

const STEWARD_FACILITY: FacilityAction[] = [
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
];
const ADMIN_FACILITY: FacilityAction[] = [
  'admin.users',
  'admin.teams',
  'admin.memberships',
  'admin.audit',
  'admin.mailbox',
  // C10 (issue 14): the second person of a two-step deletion may be an administrator
  'deletion.approve.any',
];

describe('team roles in their own team', () => {
  it('covers every team action of lib/policy.ts', () => {
    expect(Object.keys(TEAM_TABLE).sort()).toEqual([...TEAM_ACTIONS].sort());
  });
  for (const role of ['operator', 'analyst', 'pi'] as const) {
    for (const action of TEAM_ACTIONS) {
      const expected = TEAM_TABLE[action][role];
      it(`${role} ${expected ? 'may' : 'may not'} ${action}`, () => {
        expect(can(actor([[OWN, role]]), action, { teamId: OWN })).toBe(expected);
      });
    }
  }
  it('no team role holds any facility action', () => {
    for (const role of ['operator', 'analyst', 'pi'] as const) {
      for (const action of FACILITY_ACTIONS) expect(can(actor([[OWN, role]]), action)).toBe(false);
    }
  });
});

describe('cross-team refusals', () => {
  it('a membership in one team gives nothing in another', () => {
    for (const role of ['operator', 'analyst', 'pi'] as const) {
      for (const action of TEAM_ACTIONS) {
        expect(can(actor([[OWN, role]]), action, { teamId: OTHER }), `${role} ${action}`).toBe(false);
      }
    }
  });
  it('different roles in different teams are kept apart', () => {
    const a = actor([
      [OWN, 'operator'],
      [OTHER, 'pi'],
    ]);
    expect(can(a, 'upload.create', { teamId: OWN })).toBe(true);
    expect(can(a, 'upload.create', { teamId: OTHER })).toBe(false);
    expect(can(a, 'calibration.approve', { teamId: OTHER })).toBe(true);
    expect(can(a, 'calibration.approve', { teamId: OWN })).toBe(false);
    expect(teamsWhere(a, 'audit.view')).toEqual([OTHER]);
    expect(teamsWhere(a, 'shift.open')).toEqual([OWN]);
  });
  it('authorize says the object belongs to another team (403 forbidden:auth)', () => {
    try {
      authorize(actor([[OWN, 'analyst']]), 'scan.view', { teamId: OTHER });
      expect.unreachable();
    } catch (err) {
      expect(err).toBeInstanceOf(AppError);
      expect((err as AppError).status).toBe(403);
      expect((err as AppError).code).toBe('forbidden:auth');
      expect((err as AppError).message).toMatch(/team you are not a member of/);
    }
  });
});

describe('steward: metadata of every team, never results or edits', () => {
  const steward = actor([], ['steward']);
  for (const action of TEAM_ACTIONS) {
    const expected = STEWARD_TEAM_ACTIONS.includes(action);
    it(`${expected ? 'may' : 'may not'} ${action} in any team`, () => {
      expect(can(steward, action, { teamId: OWN })).toBe(expected);
      expect(can(steward, action, { teamId: OTHER })).toBe(expected);
    });
  }
  it('holds exactly the stewardship facility actions', () => {
    for (const action of FACILITY_ACTIONS) expect(can(steward, action), action).toBe(STEWARD_FACILITY.includes(action));
  });
  it('never sees results, images or raw files, and never edits', () => {
    for (const a of ['result.view', 'scan.view', 'rawfile.view', 'calibration.edit', 'reduction.start'] as const) {
      expect(can(steward, a, { teamId: OWN })).toBe(false);
    }
  });
});

describe('admin: accounts, teams and memberships, nothing else', () => {
  const admin = actor([], ['admin']);
  it('holds no team action in any team', () => {
    for (const action of TEAM_ACTIONS) {
      expect(can(admin, action, { teamId: OWN }), action).toBe(false);
      expect(can(admin, action), action).toBe(false);
    }
  });
  it('holds exactly the admin facility actions', () => {
    for (const action of FACILITY_ACTIONS) expect(can(admin, action), action).toBe(ADMIN_FACILITY.includes(action));
  });
  it('a refused admin action names the facility role (403 forbidden:admin for admin.*)', () => {
    expect(() => authorize(actor([[OWN, 'pi']]), 'admin.users')).toThrowError(
      expect.objectContaining({ code: 'forbidden:admin', status: 403 }),
    );
  });
});

describe('signed out', () => {
  it('may do nothing and gets 401', () => {
    for (const action of [...TEAM_ACTIONS, ...FACILITY_ACTIONS]) expect(can(null, action, { teamId: OWN })).toBe(false);
    expect(() => authorize(null, 'team.view', { teamId: OWN })).toThrowError(
      expect.objectContaining({ code: 'unauthorized:auth', status: 401 }),
    );
  });
});

// The convention of tests/integration/policy-matrix.test.ts: an object addressed by id is "not found" (404) for
// callers who may not see its team at all, and refused (403) where it is visible but the action is not allowed.
describe('authorizeObject: 404 for objects of teams the caller may not see, 403 for visible ones', () => {
  const codeOf = (fn: () => void): string => {
    try {
      fn();
      return 'allowed';
    } catch (err) {
      expect(err).toBeInstanceOf(AppError);
      return `${(err as AppError).status} ${(err as AppError).code}`;
    }
  };
  it('a member of another team gets 404 with the object surface, whatever the action', () => {
    for (const role of ['operator', 'analyst', 'pi'] as const) {
      for (const action of TEAM_ACTIONS) {
        expect(codeOf(() => authorizeObject(actor([[OWN, role]]), action, { teamId: OTHER, surface: 'scan' }))).toBe(
          '404 not_found:scan',
        );
      }
    }
  });
  it('the admin sees no team object: 404', () => {
    expect(
      codeOf(() => authorizeObject(actor([], ['admin']), 'campaign.view', { teamId: OWN, surface: 'campaign' })),
    ).toBe('404 not_found:campaign');
  });
  it('the steward sees every team: metadata allowed, the rest 403', () => {
    const steward = actor([], ['steward']);
    expect(codeOf(() => authorizeObject(steward, 'campaign.view', { teamId: OTHER, surface: 'campaign' }))).toBe(
      'allowed',
    );
    expect(codeOf(() => authorizeObject(steward, 'scan.metadata', { teamId: OTHER, surface: 'scan' }))).toBe('allowed');
    expect(codeOf(() => authorizeObject(steward, 'result.view', { teamId: OTHER, surface: 'scan' }))).toBe(
      '403 forbidden:auth',
    );
    expect(codeOf(() => authorizeObject(steward, 'calibration.edit', { teamId: OWN, surface: 'calibration' }))).toBe(
      '403 forbidden:auth',
    );
  });
  it('in its own team a role gets exactly what the table allows, refusals are 403', () => {
    for (const role of ['operator', 'analyst', 'pi'] as const) {
      for (const action of TEAM_ACTIONS) {
        const got = codeOf(() => authorizeObject(actor([[OWN, role]]), action, { teamId: OWN, surface: 'shift' }));
        expect(got, `${role} ${action}`).toBe(TEAM_TABLE[action][role] ? 'allowed' : '403 forbidden:auth');
      }
    }
  });
  it('signed out: 401 before anything is looked at', () => {
    expect(codeOf(() => authorizeObject(null, 'scan.view', { teamId: OTHER, surface: 'scan' }))).toBe(
      '401 unauthorized:auth',
    );
  });
});
