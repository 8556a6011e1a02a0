// The access matrix (PRODUCT.md "Who uses it", C1): EVERY route handler under app/api × every role (operator,
// analyst, pi, steward, admin, signed-out) × the caller's own team and another team, with the expected status
// written down below. Route files are discovered from the tree; a route file or exported method without a row
// makes the first test fail, so a new route cannot ship without its line in this table.
//
// Nothing is mocked but the session: the signed-in user is set with the test hook of lib/auth/session-source.ts
// (tests/integration/helpers/session.ts) and everything else — zod parsing, lib/policy.ts, MariaDB — is real.
// "own" means objects of team A (where operator, analyst and pi are members); "other" means objects of team B
// (where they are not). Steward and admin hold facility roles and no membership, so for them own/other differ only
// in which team's objects are addressed.
//
// The convention for another team's objects (lib/policy.ts authorizeObject): an object addressed by its id that the
// caller may not even see — a team member asking for another team's campaign, shift, scan, version, raw file or
// upload; an admin asking for any team's — is answered 404, exactly like an id that does not exist, so ids of other
// teams reveal nothing (the refusal still goes to the audit trail). Where the object is visible but the action is
// not allowed, the answer is 403: a member whose role does not allow it, and the steward, who reads every team's
// metadata (campaigns, shifts, scan and file metadata) but no results, calibrations or edits. A team named in the
// query or body rather than an object id (GET /api/campaigns?teamId=, /api/audit, /api/teams/current) is refused
// with 403. Signed-out callers always get 401.
//
// Expected statuses come from PRODUCT.md ("Who uses it" and the capability each route serves), written out here
// independently of the code: a route that answers differently fails its row.
import { randomBytes } from 'node:crypto';
import { readdirSync, readFileSync, statSync } from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import type { CallInput } from './helpers/call';
import type { TeamData, World } from './helpers/world';

vi.mock('server-only', () => ({}));

const { callRoute } = await import('./helpers/call');
const { actAs, clearSession } = await import('./helpers/session');
const { makeWorld } = await import('./helpers/world');
const { freshArchivedFile, freshDeletableFile, freshDeletionRequest } = await import('./helpers/stewardship');
const { closeSequelize } = await import('@/lib/db');
const { closeMailTransport, sendMail } = await import('@/lib/mail/transport');
const { closeReductionQueue } = await import('@/lib/queue/reduction-queue');
const { closeArchiveQueue } = await import('@/lib/jobs/archive');
const { closeFixityQueue } = await import('@/lib/jobs/fixity');
const { closeS3Client } = await import('@/lib/storage/s3');
const { waitForCaughtMessage } = await import('@/lib/mail/catcher-store');

// TYPES //

const ROLES = ['operator', 'analyst', 'pi', 'steward', 'admin', 'signedOut'] as const;
type Role = (typeof ROLES)[number];
type Scope = 'own' | 'other';
const METHODS = ['GET', 'POST', 'PUT', 'PATCH', 'DELETE'] as const;
type Method = (typeof METHODS)[number];

/** One expected status for both scopes, or [own team, other team]. */
type Expect = number | [number, number];

interface Ctx {
  w: World;
  scope: Scope;
  /** Team A for "own", team B for "other". */
  teamId: number;
  campaignId: number;
  shiftId: number;
  mailId: string;
  /** The per-team data of the addressed team (helpers/world.ts). */
  t: TeamData;
  role: Role;
  /** The caller (null when signed out). */
  userId: number | null;
}

interface Row {
  /** Route path as in the tree, e.g. /api/admin/users/[userId]/status. */
  route: string;
  method: Method;
  request: (ctx: Ctx) => Promise<Omit<CallInput, 'method'>> | Omit<CallInput, 'method'>;
  expect: Record<Role, Expect>;
  /** Rows that cannot run in-process say why and where they are covered instead (never for plain routes). */
  coveredElsewhere?: string;
}

// HELPERS FOR THE TABLE //

const all = (status: number): Record<Role, Expect> =>
  Object.fromEntries(ROLES.map((r) => [r, status])) as Record<Role, Expect>;
/** Only administrators may; everybody else is refused; signed-out callers get 401. */
const adminOnly = (ok: number): Record<Role, Expect> => ({
  operator: 403,
  analyst: 403,
  pi: 403,
  steward: 403,
  admin: ok,
  signedOut: 401,
});
const signedIn = (status: number): Record<Role, Expect> => ({ ...all(status), signedOut: 401 });
/**
 * An object of a team addressed by its id (see the header): in their own team the team roles get what their role
 * allows; in another team they get 404, and so does the admin everywhere; the steward sees every team's metadata.
 */
const teamObject = (own: { operator: number; analyst: number; pi: number; steward: number }): Record<Role, Expect> => ({
  operator: [own.operator, 404],
  analyst: [own.analyst, 404],
  pi: [own.pi, 404],
  steward: own.steward,
  admin: 404,
  signedOut: 401,
});
/** Reading something every member of the team may read and the steward may read as metadata. */
const metadataRead = (ok = 200) => teamObject({ operator: ok, analyst: ok, pi: ok, steward: ok });
/** Reading results (or calibrations): members of the team only; the steward is refused (no results, PRODUCT.md). */
const memberRead = (ok = 200) => teamObject({ operator: ok, analyst: ok, pi: ok, steward: 403 });
/** Analyst work: calibrations and settings, (re-)reductions, releasing quarantined files. */
const analystOnly = (ok: number) => teamObject({ operator: 403, analyst: ok, pi: 403, steward: 403 });
/** Running a shift: operators and analysts ("everything an operator may"); not the PI, not the steward. */
const shiftCrew = (ok: number) => teamObject({ operator: ok, analyst: ok, pi: 403, steward: 403 });
/** Approving a calibration or settings version for use: the PI only. */
const piOnly = (ok: number) => teamObject({ operator: 403, analyst: 403, pi: ok, steward: 403 });
/** The upload belongs to the caller when the caller could have started it (own team); else to the team's member. */
const uploadOwner = ({ t, role, scope, userId }: Ctx) =>
  scope === 'own' && (role === 'operator' || role === 'analyst') && userId ? userId : t.ownerId;
const campaignPath = (t: TeamData, rest = '') => ({
  path: `/api/campaigns/${t.campaignId}${rest}`,
  params: { campaignId: String(t.campaignId) },
});
const scanPath = (t: TeamData, rest = '') => ({
  path: `/api/scans/${t.scanId}${rest}`,
  params: { scanId: String(t.scanId) },
});
const versionRows = (kind: 'calibration' | 'settings'): Row[] => {
  const seg = kind === 'calibration' ? 'calibrations' : 'settings';
  const base = `/api/campaigns/[campaignId]/${seg}`;
  const at = (t: TeamData, versionId: number, rest = '') => ({
    path: `/api/campaigns/${t.campaignId}/${seg}/${versionId}${rest}`,
    params: { campaignId: String(t.campaignId), versionId: String(versionId) },
  });
  return [
    // C7: every member reads the versions; they are not catalogue metadata, so the steward does not.
    { route: base, method: 'GET', request: ({ t }) => campaignPath(t, `/${seg}`), expect: memberRead() },
    {
      route: base,
      method: 'POST',
      request: ({ w, t }) => ({
        ...campaignPath(t, `/${seg}`),
        body: { body: w.versionBody(kind), note: 'matrix: a new draft' },
      }),
      // RFC 9110 §15.3.2: a new version is a created resource.
      expect: analystOnly(201),
    },
    {
      route: `${base}/[versionId]`,
      method: 'GET',
      request: ({ t }) => at(t, kind === 'calibration' ? t.draftCalibrationId : t.draftSettingsId),
      expect: memberRead(),
    },
    {
      route: `${base}/[versionId]`,
      method: 'PATCH',
      request: async ({ w, t }) => ({
        ...at(t, await w.freshDraft(t, kind)),
        body: { body: w.versionBody(kind), note: 'matrix: edited draft' },
      }),
      expect: analystOnly(200),
    },
    // What approving would change: shown to the PI before the approval, so PI only as well.
    {
      route: `${base}/[versionId]/approve`,
      method: 'GET',
      request: ({ t }) => at(t, kind === 'calibration' ? t.draftCalibrationId : t.draftSettingsId, '/approve'),
      expect: piOnly(200),
    },
    {
      route: `${base}/[versionId]/approve`,
      method: 'POST',
      request: async ({ w, t }) => at(t, await w.freshDraft(t, kind), '/approve'),
      expect: piOnly(200),
    },
  ];
};

/** A saved comparison of the team's campaign (issue 13), made directly in the table; returns its address id. */
async function freshComparison(w: World, t: TeamData): Promise<string> {
  const { SavedComparison } = await import('@/models');
  const slug = randomBytes(6).toString('hex'); // 12 of [0-9a-f]: a valid address id
  await SavedComparison.create({
    team_id: t.teamId,
    slug,
    title: w.unique('matrix comparison'),
    spec: { selection: { campaignIds: [t.campaignId], scanIds: [] } },
    created_by: t.ownerId,
  });
  return slug;
}
const comparisonPath = (slug: string) => ({ path: `/api/comparisons/${slug}`, params: { comparisonId: slug } });

/**
 * A published landing page of a campaign of the matrix world (made directly in the table; the publishing route has
 * its own rows), for the public record rows. Its public id is derived from the campaign id, so repeats find it.
 */
async function publishedLanding(campaignId: number): Promise<string> {
  const { CampaignLanding } = await import('@/models');
  const publicId = `m${String(campaignId).padStart(11, '0')}`.slice(-12);
  const [row] = await CampaignLanding.findOrCreate({
    where: { campaign_id: campaignId },
    defaults: {
      campaign_id: campaignId,
      public_id: publicId,
      published: true,
      published_at: new Date(),
      changed_by: null,
    },
  });
  if (!row.published) await row.update({ published: true });
  return row.public_id;
}

const BOGUS_TOKEN = 'A'.repeat(43);

// THE TABLE //

const ROWS: Row[] = [
  { route: '/api/ping', method: 'GET', request: () => ({ path: '/api/ping' }), expect: all(200) },
  {
    route: '/api/auth/[...nextauth]',
    method: 'GET',
    request: () => ({ path: '/api/auth/csrf' }),
    expect: all(200),
    coveredElsewhere:
      "next-auth's own endpoints read cookies() from next/headers and need a real request scope; sign-in, " +
      'sign-out and session are exercised through the running app in tests/e2e/auth.spec.ts',
  },
  {
    route: '/api/auth/[...nextauth]',
    method: 'POST',
    request: () => ({ path: '/api/auth/callback/credentials' }),
    expect: all(200),
    coveredElsewhere: 'see the GET row: tests/e2e/auth.spec.ts signs in and out through these endpoints',
  },
  {
    route: '/api/auth/password-reset',
    method: 'POST',
    request: ({ w }) => ({ path: '/api/auth/password-reset', body: { email: w.emails.operator } }),
    expect: all(202),
  },
  {
    route: '/api/auth/password-reset/complete',
    method: 'POST',
    request: () => ({
      path: '/api/auth/password-reset/complete',
      body: { token: BOGUS_TOKEN, password: 'long enough password', confirm: 'long enough password' },
    }),
    expect: all(404),
  },
  {
    route: '/api/auth/invitations/accept',
    method: 'POST',
    request: () => ({
      path: '/api/auth/invitations/accept',
      body: { token: BOGUS_TOKEN, name: 'Someone', password: 'long enough password', confirm: 'long enough password' },
    }),
    expect: all(404),
  },
  { route: '/api/me', method: 'GET', request: () => ({ path: '/api/me' }), expect: signedIn(200) },
  // C11: everyone signed in reads and sets their own e-mail choices (the account is the session's, never an id).
  {
    route: '/api/me/notifications',
    method: 'GET',
    request: () => ({ path: '/api/me/notifications' }),
    expect: signedIn(200),
  },
  {
    route: '/api/me/notifications',
    method: 'PUT',
    request: () => ({
      path: '/api/me/notifications',
      body: { shift_receipt: true, reduction_failed: true, fixity_alert: true },
    }),
    expect: signedIn(200),
  },
  {
    // Own password only: every signed-in user reaches the current-password check (a wrong one here, so the
    // matrix's accounts keep theirs: 400); signed out: 401. Two wrong tries per account stay under the free
    // failures of the sign-in throttle.
    route: '/api/me/password',
    method: 'POST',
    request: () => ({
      path: '/api/me/password',
      body: {
        currentPassword: 'not the password',
        password: 'a fresh long passphrase',
        confirm: 'a fresh long passphrase',
      },
    }),
    expect: signedIn(400),
  },
  { route: '/api/teams', method: 'GET', request: () => ({ path: '/api/teams' }), expect: signedIn(200) },
  {
    route: '/api/teams/current',
    method: 'POST',
    request: ({ teamId }) => ({ path: '/api/teams/current', body: { teamId } }),
    expect: { operator: [200, 403], analyst: [200, 403], pi: [200, 403], steward: 403, admin: 403, signedOut: 401 },
  },
  {
    route: '/api/campaigns',
    method: 'GET',
    request: ({ teamId }) => ({ path: '/api/campaigns', query: { teamId } }),
    // A steward reads every team's campaign metadata; an admin manages accounts, not data.
    expect: { operator: [200, 403], analyst: [200, 403], pi: [200, 403], steward: 200, admin: 403, signedOut: 401 },
  },
  {
    route: '/api/campaigns',
    method: 'POST',
    request: ({ w, teamId }) => ({
      path: '/api/campaigns',
      body: {
        teamId,
        name: w.unique('Matrix campaign'),
        target: 'Ne',
        wavelengthNm: 1300,
        experimentKind: 'bicircular',
      },
    }),
    expect: { operator: 403, analyst: [201, 403], pi: [201, 403], steward: 403, admin: 403, signedOut: 401 },
  },
  {
    route: '/api/shifts',
    method: 'POST',
    request: ({ campaignId }) => ({ path: '/api/shifts', body: { campaignId } }),
    // Another team's campaign is "not found" for members of other teams; a steward sees it exists but may not open.
    expect: { operator: [201, 404], analyst: [201, 404], pi: [403, 404], steward: 403, admin: 404, signedOut: 401 },
  },
  {
    route: '/api/audit',
    method: 'GET',
    request: ({ teamId }) => ({ path: '/api/audit', query: { teamId } }),
    expect: { operator: 403, analyst: 403, pi: [200, 403], steward: 200, admin: 200, signedOut: 401 },
  },
  // The export of a range of days: the same readers as the audit trail itself (C13).
  {
    route: '/api/audit/export',
    method: 'GET',
    request: ({ teamId }) => ({
      path: '/api/audit/export',
      query: { teamId, format: 'json', from: '2026-01-01', to: '2026-12-31' },
    }),
    expect: { operator: 403, analyst: 403, pi: [200, 403], steward: 200, admin: 200, signedOut: 401 },
  },
  { route: '/api/admin/users', method: 'GET', request: () => ({ path: '/api/admin/users' }), expect: adminOnly(200) },
  {
    route: '/api/admin/users/invite',
    method: 'POST',
    request: ({ w, teamId }) => ({
      path: '/api/admin/users/invite',
      body: { email: `${w.unique('invite')}@matrix.example`, teamId, role: 'operator' },
    }),
    expect: adminOnly(201),
  },
  {
    route: '/api/admin/users/[userId]/status',
    method: 'POST',
    request: async ({ w, teamId }) => {
      const userId = await w.freshUser({ teamId, role: 'operator' });
      return {
        path: `/api/admin/users/${userId}/status`,
        params: { userId: String(userId) },
        body: { isActive: false },
      };
    },
    expect: adminOnly(200),
  },
  {
    route: '/api/admin/memberships',
    method: 'POST',
    request: async ({ w, teamId }) => ({
      path: '/api/admin/memberships',
      body: { userId: await w.freshUser(), teamId, role: 'analyst' },
    }),
    expect: adminOnly(200),
  },
  {
    route: '/api/admin/memberships',
    method: 'DELETE',
    request: async ({ w, teamId }) => ({
      path: '/api/admin/memberships',
      query: { userId: await w.freshUser({ teamId, role: 'operator' }), teamId },
    }),
    expect: adminOnly(200),
  },
  {
    route: '/api/admin/facility-roles',
    method: 'POST',
    request: async ({ w }) => ({
      path: '/api/admin/facility-roles',
      body: { userId: await w.freshUser(), role: 'steward' },
    }),
    expect: adminOnly(200),
  },
  {
    route: '/api/admin/facility-roles',
    method: 'DELETE',
    request: async ({ w }) => ({
      path: '/api/admin/facility-roles',
      query: { userId: await w.freshUser({ facility: 'steward' }), role: 'steward' },
    }),
    expect: adminOnly(200),
  },
  {
    route: '/api/admin/invitations/[invitationId]/revoke',
    method: 'POST',
    request: async ({ w, teamId }) => {
      const id = await w.freshInvitation(teamId);
      return { path: `/api/admin/invitations/${id}/revoke`, params: { invitationId: String(id) } };
    },
    expect: adminOnly(200),
  },
  { route: '/api/admin/teams', method: 'GET', request: () => ({ path: '/api/admin/teams' }), expect: adminOnly(200) },
  {
    route: '/api/admin/teams',
    method: 'POST',
    request: ({ w }) => ({ path: '/api/admin/teams', body: { slug: w.unique('team'), name: w.unique('Matrix team') } }),
    expect: adminOnly(201),
  },
  {
    route: '/api/admin/mailbox',
    method: 'GET',
    request: () => ({ path: '/api/admin/mailbox' }),
    expect: adminOnly(200),
  },
  {
    route: '/api/admin/mailbox/[messageId]',
    method: 'GET',
    request: ({ mailId }) => ({ path: `/api/admin/mailbox/${mailId}`, params: { messageId: mailId } }),
    expect: adminOnly(200),
  },

  // CAMPAIGNS (C6, C7, C5, C8) //
  // The campaign page: metadata (shifts, scan counts, current versions), readable by the steward.
  { route: '/api/campaigns/[campaignId]', method: 'GET', request: ({ t }) => campaignPath(t), expect: metadataRead() },
  ...versionRows('calibration'),
  ...versionRows('settings'),
  // Batch progress of re-reductions (counts per job state): campaign metadata.
  {
    route: '/api/campaigns/[campaignId]/reduce',
    method: 'GET',
    request: ({ t }) => campaignPath(t, '/reduce'),
    expect: metadataRead(),
  },
  {
    route: '/api/campaigns/[campaignId]/reduce',
    method: 'POST',
    request: async ({ w, t }) => {
      const campaignId = await w.freshReducibleCampaign(t);
      return { path: `/api/campaigns/${campaignId}/reduce`, params: { campaignId: String(campaignId) }, body: {} };
    },
    expect: analystOnly(200),
  },
  // The scan table: members with results, the steward the same rows without them (scans-api.test.ts checks that).
  {
    route: '/api/campaigns/[campaignId]/scans',
    method: 'GET',
    request: ({ t }) => ({ ...campaignPath(t, '/scans'), query: { page: 1, pageSize: 10 } }),
    expect: metadataRead(),
  },
  // Offsets per step: results.
  {
    route: '/api/campaigns/[campaignId]/trends',
    method: 'GET',
    request: ({ t }) => campaignPath(t, '/trends'),
    expect: memberRead(),
  },
  // Helicity-difference residuals (systematic of the offset): results.
  {
    route: '/api/campaigns/[campaignId]/helicity',
    method: 'GET',
    request: ({ t }) => campaignPath(t, '/helicity'),
    expect: memberRead(),
  },

  // CAMPAIGN COMPARISON (C8, C9; issue 13) //
  // Step points of chosen campaigns: results, checked per campaign (another team's campaign answers 404).
  {
    route: '/api/comparisons/points',
    method: 'GET',
    request: ({ t }) => ({ path: '/api/comparisons/points', query: { campaigns: t.campaignId } }),
    expect: memberRead(),
  },
  // Model overlays and the campaigns to pick from: anyone who reads results in some team; not the steward or admin.
  {
    route: '/api/comparisons/models',
    method: 'GET',
    request: () => ({
      path: '/api/comparisons/models',
      query: { target: 'He', wavelengthNm: 800, ellipticity: 0.87, intensities: '2e14,4e14', models: 'simple_man' },
    }),
    expect: { operator: 200, analyst: 200, pi: 200, steward: 403, admin: 403, signedOut: 401 },
  },
  {
    route: '/api/comparisons/sources',
    method: 'GET',
    request: () => ({ path: '/api/comparisons/sources' }),
    expect: { operator: 200, analyst: 200, pi: 200, steward: 403, admin: 403, signedOut: 401 },
  },
  {
    route: '/api/comparisons',
    method: 'GET',
    request: () => ({ path: '/api/comparisons' }),
    expect: { operator: 200, analyst: 200, pi: 200, steward: 403, admin: 403, signedOut: 401 },
  },
  // Saving one for a team: the PI of that team (the team is named in the body: another team's is 403).
  {
    route: '/api/comparisons',
    method: 'POST',
    request: ({ w, t, teamId }) => ({
      path: '/api/comparisons',
      body: { title: w.unique('matrix comparison'), teamId, spec: { selection: { campaignIds: [t.campaignId] } } },
    }),
    expect: { operator: 403, analyst: 403, pi: [201, 403], steward: 403, admin: 403, signedOut: 401 },
  },
  // A saved comparison by its address: members of its team who read results; the PI deletes.
  {
    route: '/api/comparisons/[comparisonId]',
    method: 'GET',
    request: async ({ w, t }) => comparisonPath(await freshComparison(w, t)),
    expect: memberRead(),
  },
  {
    route: '/api/comparisons/[comparisonId]',
    method: 'DELETE',
    request: async ({ w, t }) => comparisonPath(await freshComparison(w, t)),
    expect: piOnly(200),
  },

  // INGEST (C2) //
  {
    route: '/api/uploads',
    method: 'POST',
    request: ({ w, t }) => ({
      path: '/api/uploads',
      body: {
        shiftId: t.shiftId,
        fileName: `${w.unique('matrix')}.h5`,
        sizeBytes: 4096,
        lastModifiedMs: 1_700_000_000_000,
      },
    }),
    expect: shiftCrew(201),
  },
  {
    route: '/api/uploads/[uploadId]',
    method: 'GET',
    request: async (ctx) => {
      const id = await ctx.w.freshUpload(ctx.t, uploadOwner(ctx), 'single');
      return { path: `/api/uploads/${id}`, params: { uploadId: String(id) } };
    },
    expect: shiftCrew(200),
  },
  {
    route: '/api/uploads/[uploadId]/parts',
    method: 'GET',
    request: async (ctx) => {
      const id = await ctx.w.freshUpload(ctx.t, uploadOwner(ctx), 'multipart');
      return { path: `/api/uploads/${id}/parts`, params: { uploadId: String(id) } };
    },
    expect: shiftCrew(200),
  },
  {
    route: '/api/uploads/[uploadId]/parts',
    method: 'POST',
    request: async (ctx) => {
      const id = await ctx.w.freshUpload(ctx.t, uploadOwner(ctx), 'multipart');
      return { path: `/api/uploads/${id}/parts`, params: { uploadId: String(id) }, body: { partNumbers: [1, 2] } };
    },
    expect: shiftCrew(200),
  },
  {
    route: '/api/uploads/[uploadId]/complete',
    method: 'POST',
    request: async (ctx) => {
      const id = await ctx.w.freshUpload(ctx.t, uploadOwner(ctx), 'single');
      return { path: `/api/uploads/${id}/complete`, params: { uploadId: String(id) }, body: {} };
    },
    expect: shiftCrew(200),
  },
  {
    route: '/api/uploads/[uploadId]/abort',
    method: 'POST',
    request: async (ctx) => {
      const id = await ctx.w.freshUpload(ctx.t, uploadOwner(ctx), 'multipart');
      return { path: `/api/uploads/${id}/abort`, params: { uploadId: String(id) } };
    },
    expect: shiftCrew(200),
  },
  // Before sending, the drop panel asks which checksums the team already stored: for those who upload.
  {
    route: '/api/shifts/[shiftId]/stored',
    method: 'GET',
    request: ({ t }) => ({
      path: `/api/shifts/${t.shiftId}/stored`,
      params: { shiftId: String(t.shiftId) },
      query: { sha256: 'ab'.repeat(32) },
    }),
    expect: shiftCrew(200),
  },
  // Releasing a quarantined file is analyst work; the steward sees raw files (C10) but does not release them.
  {
    route: '/api/raw-files/[id]/release',
    method: 'POST',
    request: async ({ w, t }) => {
      const id = await w.freshQuarantinedFile(t);
      return {
        path: `/api/raw-files/${id}/release`,
        params: { id: String(id) },
        body: { mode: 'accept', reason: 'The target gas is Ar; the log of the shift says so.' },
      };
    },
    expect: analystOnly(200),
  },
  // C10 (issue 14): a campaign's citation metadata. Every member reads it and downloads its records (schema.org
  // needs no mandatory DataCite property, so it answers 200 on a bare campaign); the team's PI and the data
  // steward (every team) edit it; analysts and operators do not, the admin sees nothing of any team.
  {
    route: '/api/campaigns/[campaignId]/citation',
    method: 'GET',
    request: ({ t }) => campaignPath(t, '/citation'),
    expect: metadataRead(),
  },
  {
    route: '/api/campaigns/[campaignId]/citation',
    method: 'PUT',
    request: ({ t, role }) => ({
      ...campaignPath(t, '/citation'),
      body: {
        description: `Matrix row by ${role}.`,
        licence: 'CC-BY-4.0',
        creators: [{ nameType: 'Personal', givenName: 'Ada', familyName: 'Quill', orcid: '0000-0002-1825-0097' }],
      },
    }),
    expect: teamObject({ operator: 403, analyst: 403, pi: 200, steward: 200 }),
  },
  // C10 (issue 14): the data steward's register of every team's raw files (catalogue metadata, no team in the path).
  {
    route: '/api/stewardship/files',
    method: 'GET',
    request: ({ teamId }) => ({ path: '/api/stewardship/files', query: { teamId } }),
    expect: { operator: 403, analyst: 403, pi: 403, steward: 200, admin: 403, signedOut: 401 },
  },
  // C10 (issue 14): retention, embargo and legal hold are the data steward's (every team); team members see the
  // campaign or file but may not set them (403), other teams' ids and the admin get 404.
  {
    route: '/api/campaigns/[campaignId]/retention',
    method: 'PUT',
    request: ({ t }) => ({
      ...campaignPath(t, '/retention'),
      body: { retentionUntil: '2036-12-31', embargoUntil: null, legalHold: false },
    }),
    expect: teamObject({ operator: 403, analyst: 403, pi: 403, steward: 200 }),
  },
  {
    route: '/api/raw-files/[id]/retention',
    method: 'PUT',
    request: async ({ w, t }) => {
      const { rawFileId } = await freshDeletableFile(w, t);
      return {
        path: `/api/raw-files/${rawFileId}/retention`,
        params: { id: String(rawFileId) },
        body: { retentionUntil: '2020-01-01', embargoUntil: null, legalHold: false },
      };
    },
    expect: teamObject({ operator: 403, analyst: 403, pi: 403, steward: 200 }),
  },
  // Two-step deletion: the steward asks (201), a PI of the team or an administrator confirms; nobody else.
  {
    route: '/api/raw-files/[id]/deletion',
    method: 'POST',
    request: async ({ w, t }) => {
      const { rawFileId } = await freshDeletableFile(w, t);
      return {
        path: `/api/raw-files/${rawFileId}/deletion`,
        params: { id: String(rawFileId) },
        body: { reason: 'matrix: past retention, no longer needed' },
      };
    },
    expect: teamObject({ operator: 403, analyst: 403, pi: 403, steward: 201 }),
  },
  {
    route: '/api/deletion-requests',
    method: 'GET',
    request: ({ teamId }) => ({ path: '/api/deletion-requests', query: { teamId } }),
    expect: { operator: 403, analyst: 403, pi: [200, 403], steward: 200, admin: 200, signedOut: 401 },
  },
  {
    route: '/api/deletion-requests/[requestId]/confirm',
    method: 'POST',
    request: async ({ w, t }) => {
      const id = await freshDeletionRequest(w, t, w.users.steward);
      return { path: `/api/deletion-requests/${id}/confirm`, params: { requestId: String(id) } };
    },
    expect: { operator: [403, 404], analyst: [403, 404], pi: [200, 404], steward: 403, admin: 200, signedOut: 401 },
  },
  {
    // The steward who asked may withdraw; a PI of the team or an administrator may refuse.
    route: '/api/deletion-requests/[requestId]/cancel',
    method: 'POST',
    request: async ({ w, t }) => {
      const id = await freshDeletionRequest(w, t, w.users.steward);
      return {
        path: `/api/deletion-requests/${id}/cancel`,
        params: { requestId: String(id) },
        body: { reason: 'matrix: the data are still needed' },
      };
    },
    expect: { operator: [403, 404], analyst: [403, 404], pi: [200, 404], steward: 200, admin: 200, signedOut: 401 },
  },
  // C10 (issue 14): archive and restore. Stewards archive and restore every team's files (202: the job is queued);
  // the team's PI may have an archived file of the team restored; nobody else. Campaign-wide moves are the steward's.
  {
    route: '/api/raw-files/[id]/archive',
    method: 'POST',
    request: async ({ w, t }) => {
      const { rawFileId } = await freshDeletableFile(w, t);
      return { path: `/api/raw-files/${rawFileId}/archive`, params: { id: String(rawFileId) }, body: {} };
    },
    expect: teamObject({ operator: 403, analyst: 403, pi: 403, steward: 202 }),
  },
  {
    route: '/api/raw-files/[id]/restore',
    method: 'POST',
    request: async ({ w, t }) => {
      const { rawFileId } = await freshArchivedFile(w, t);
      return { path: `/api/raw-files/${rawFileId}/restore`, params: { id: String(rawFileId) } };
    },
    expect: teamObject({ operator: 403, analyst: 403, pi: 202, steward: 202 }),
  },
  {
    route: '/api/campaigns/[campaignId]/archive',
    method: 'GET',
    request: ({ t }) => campaignPath(t, '/archive'),
    expect: metadataRead(),
  },
  {
    route: '/api/campaigns/[campaignId]/archive',
    method: 'POST',
    request: async ({ w, t }) => {
      // a fresh campaign, so that the shared world's scans stay online for the other rows
      const campaignId = await w.freshReducibleCampaign(t);
      return {
        path: `/api/campaigns/${campaignId}/archive`,
        params: { campaignId: String(campaignId) },
        body: { direction: 'archive' },
      };
    },
    expect: teamObject({ operator: 403, analyst: 403, pi: 403, steward: 202 }),
  },
  // C10/C11 (issue 14): the fixity report and a run by hand are the data steward's (no team in the path).
  {
    route: '/api/stewardship/fixity',
    method: 'GET',
    request: () => ({ path: '/api/stewardship/fixity' }),
    expect: { operator: 403, analyst: 403, pi: 403, steward: 200, admin: 403, signedOut: 401 },
  },
  {
    route: '/api/stewardship/fixity',
    method: 'POST',
    request: () => ({ path: '/api/stewardship/fixity', body: { limit: 1 } }),
    expect: { operator: 403, analyst: 403, pi: 403, steward: 202, admin: 403, signedOut: 401 },
  },
  {
    route: '/api/campaigns/[campaignId]/citation/record',
    method: 'GET',
    request: ({ t }) => ({ ...campaignPath(t, '/citation/record'), query: { format: 'schema-org' } }),
    expect: metadataRead(),
  },
  // C10 (issue 14): the campaign's public landing page. Its state is read like the citation metadata; the team's PI
  // and the data steward (every team) publish or withdraw it (withdrawing a never-published page answers 200 and
  // changes nothing, so the row leaves every campaign private).
  {
    route: '/api/campaigns/[campaignId]/landing',
    method: 'GET',
    request: ({ t }) => campaignPath(t, '/landing'),
    expect: metadataRead(),
  },
  {
    route: '/api/campaigns/[campaignId]/landing',
    method: 'PUT',
    request: ({ t }) => ({ ...campaignPath(t, '/landing'), body: { published: false } }),
    expect: teamObject({ operator: 403, analyst: 403, pi: 200, steward: 200 }),
  },
  // The record behind a published public page: anyone, signed in or not, of any team (lib/policy.ts 'landing.read').
  {
    route: '/api/public/landing/[publicId]/record',
    method: 'GET',
    request: async ({ t }) => {
      const publicId = await publishedLanding(t.campaignId);
      return {
        path: `/api/public/landing/${publicId}/record`,
        params: { publicId },
        query: { format: 'schema-org' },
      };
    },
    expect: all(200),
  },
  // …and an address that was never published: 404 for everyone, members of the campaign's team included.
  {
    route: '/api/public/landing/[publicId]/record',
    method: 'GET',
    request: () => ({
      path: '/api/public/landing/zzzzzzzzzzzz/record',
      params: { publicId: 'zzzzzzzzzzzz' },
      query: { format: 'schema-org' },
    }),
    expect: all(404),
  },

  // SHIFTS (C2) //
  // The shift page, its log and its receipt (files, sizes, checksums, problems): metadata the steward may read.
  {
    route: '/api/shifts/[shiftId]',
    method: 'GET',
    request: ({ t }) => ({ path: `/api/shifts/${t.shiftId}`, params: { shiftId: String(t.shiftId) } }),
    expect: metadataRead(),
  },
  {
    route: '/api/shifts/[shiftId]/log',
    method: 'GET',
    request: ({ t }) => ({ path: `/api/shifts/${t.shiftId}/log`, params: { shiftId: String(t.shiftId) } }),
    expect: metadataRead(),
  },
  {
    route: '/api/shifts/[shiftId]/log',
    method: 'POST',
    request: async ({ w, t }) => {
      const id = await w.freshShift(t);
      return {
        path: `/api/shifts/${id}/log`,
        params: { shiftId: String(id) },
        body: { text: 'Ar jet back after the nozzle change.', target: 'Ar', detectorVoltages: { mcpBackV: 1700 } },
      };
    },
    expect: shiftCrew(201),
  },
  {
    route: '/api/shifts/[shiftId]/close',
    method: 'POST',
    request: async ({ w, t }) => {
      const id = await w.freshShift(t);
      return { path: `/api/shifts/${id}/close`, params: { shiftId: String(id) }, body: {} };
    },
    expect: shiftCrew(200),
  },
  {
    route: '/api/shifts/[shiftId]/receipt',
    method: 'GET',
    request: ({ t }) => ({
      path: `/api/shifts/${t.closedShiftId}/receipt`,
      params: { shiftId: String(t.closedShiftId) },
    }),
    expect: metadataRead(),
  },

  // SCANS (C6, C5) //
  // The scan page: the steward gets the scan and its file without results (metadata).
  { route: '/api/scans/[scanId]', method: 'GET', request: ({ t }) => scanPath(t), expect: metadataRead() },
  {
    route: '/api/scans/[scanId]/result',
    method: 'GET',
    request: ({ t }) => scanPath(t, '/result'),
    expect: memberRead(),
  },
  {
    route: '/api/scans/[scanId]/image',
    method: 'GET',
    request: ({ t }) => ({ ...scanPath(t, '/image'), query: { kind: 'calibrated', step: 0, max: 64 } }),
    expect: memberRead(),
  },
  {
    route: '/api/scans/[scanId]/curves',
    method: 'GET',
    request: ({ t }) => ({ ...scanPath(t, '/curves'), query: { step: 1 } }),
    expect: memberRead(),
  },
  // The calibration bench's raw frame (C7): the data behind every result, read by the same members.
  {
    route: '/api/scans/[scanId]/raw-frame',
    method: 'GET',
    request: ({ t }) => ({ ...scanPath(t, '/raw-frame'), query: { step: 0 } }),
    expect: memberRead(),
  },
  {
    route: '/api/scans/[scanId]/region',
    method: 'GET',
    request: ({ t }) => ({ ...scanPath(t, '/region'), query: { px0: -1, px1: 1, py0: -0.5, py1: 0.5 } }),
    expect: memberRead(),
  },
  // Calibration bench (C7, issue 15): server-side fitting tools for analysts and the team's PI; the operator runs
  // shifts and the steward never sees images. The world's scan has a raw image file of one step.
  {
    route: '/api/scans/[scanId]/bench/[tool]',
    method: 'POST',
    request: ({ t }) => ({
      path: `/api/scans/${t.scanId}/bench/hot_pixels`,
      params: { scanId: String(t.scanId), tool: 'hot_pixels' },
      body: { step: 0 },
    }),
    expect: teamObject({ operator: 403, analyst: 200, pi: 200, steward: 403 }),
  },
  // Downloads of one scan's result are the result itself (C6), so every member may; the PI's "export" (C8) is the
  // comparison export, which has no route yet.
  {
    route: '/api/scans/[scanId]/download/json',
    method: 'GET',
    request: ({ t }) => ({ ...scanPath(t, '/download/json'), query: { resultId: t.resultId } }),
    expect: memberRead(),
  },
  {
    route: '/api/scans/[scanId]/download/csv',
    method: 'GET',
    request: ({ t }) => ({ ...scanPath(t, '/download/csv'), query: { resultId: t.resultId } }),
    expect: memberRead(),
  },
  // A redirect (303) to a presigned GET of exactly this result's object.
  {
    route: '/api/scans/[scanId]/download/h5',
    method: 'GET',
    request: ({ t }) => ({ ...scanPath(t, '/download/h5'), query: { resultId: t.resultId } }),
    expect: memberRead(303),
  },
  {
    route: '/api/scans/[scanId]/reduce',
    method: 'POST',
    request: async ({ w, t }) => {
      const scanId = await w.freshScan(t);
      return { path: `/api/scans/${scanId}/reduce`, params: { scanId: String(scanId) }, body: {} };
    },
    expect: analystOnly(200),
  },
  // Flagging a scan is the analyst's (PRODUCT.md "Who uses it": analyst … flag scans); a fresh scan per call, so
  // a flag set by one row never leaks into the data other rows read.
  {
    route: '/api/scans/[scanId]/flag',
    method: 'PUT',
    request: async ({ w, t }) => {
      const scanId = await w.freshScan(t);
      return {
        path: `/api/scans/${scanId}/flag`,
        params: { scanId: String(scanId) },
        body: { flagged: true, reason: 'Background frame looks saturated.' },
      };
    },
    expect: analystOnly(200),
  },
];

// DISCOVERY //

const REPO = path.resolve(import.meta.dirname, '../..');
const API_DIR = path.join(REPO, 'app', 'api');

function routeFiles(dir: string): string[] {
  const out: string[] = [];
  for (const name of readdirSync(dir)) {
    const p = path.join(dir, name);
    if (statSync(p).isDirectory()) out.push(...routeFiles(p));
    else if (/^route\.(ts|tsx|js|mjs)$/.test(name)) out.push(p);
  }
  return out;
}

/** Exported HTTP methods, read from the source (no import side effects). */
function exportedMethods(source: string): Method[] {
  const found = new Set<Method>();
  for (const m of METHODS) {
    const direct = new RegExp(`export\\s+(?:const|let|async\\s+function|function)\\s+${m}\\b`);
    const aliased = new RegExp(`export\\s*\\{[^}]*\\bas\\s+${m}\\b[^}]*\\}`);
    const plain = new RegExp(`export\\s*\\{[^}]*\\b${m}\\b[^}]*\\}`);
    const destructured = new RegExp(`export\\s+(?:const|let)\\s*\\{[^}]*\\b${m}\\b[^}]*\\}\\s*=`);
    if ([direct, aliased, plain, destructured].some((re) => re.test(source))) found.add(m);
  }
  return [...found];
}

const DISCOVERED = routeFiles(API_DIR).map((file) => ({
  file,
  route: `/api/${path.relative(API_DIR, path.dirname(file)).split(path.sep).join('/')}`.replace(/\/$/, ''),
  methods: exportedMethods(readFileSync(file, 'utf8')),
}));

// RUN //

let w: World;
let mailId = '';

beforeAll(async () => {
  w = await makeWorld({ data: true });
  const to = `matrix-${w.run}@matrix.example`;
  await sendMail({ to, subject: `Matrix ${w.run}`, text: 'A message for the mailbox rows.' });
  mailId = (await waitForCaughtMessage((m) => m.to.includes(to))).id;
});

afterAll(async () => {
  clearSession();
  await w?.cleanup();
  await closeReductionQueue();
  await closeArchiveQueue();
  await closeFixityQueue();
  closeS3Client();
  closeMailTransport();
  await closeSequelize();
});

describe('policy matrix', () => {
  it('has a row for every route file and every exported method under app/api', () => {
    expect(DISCOVERED.length).toBeGreaterThan(10);
    const missing: string[] = [];
    for (const d of DISCOVERED) {
      if (d.methods.length === 0) missing.push(`${d.route} (exports no HTTP method: is it a route?)`);
      for (const m of d.methods) {
        if (!ROWS.some((r) => r.route === d.route && r.method === m)) missing.push(`${m} ${d.route}`);
      }
    }
    const stale = ROWS.filter((r) => !DISCOVERED.some((d) => d.route === r.route && d.methods.includes(r.method))).map(
      (r) => `${r.method} ${r.route}`,
    );
    expect(missing, 'routes without a row in tests/integration/policy-matrix.test.ts').toEqual([]);
    expect(stale, 'rows whose route no longer exists').toEqual([]);
  });

  for (const row of ROWS.filter((r) => !r.coveredElsewhere)) {
    it(`${row.method} ${row.route}`, async () => {
      const file = DISCOVERED.find((d) => d.route === row.route)?.file;
      expect(file, `route file of ${row.route}`).toBeDefined();
      const mod = (await import(file!)) as Record<string, (r: Request, c?: unknown) => Promise<Response>>;
      const handler = mod[row.method];
      expect(typeof handler).toBe('function');
      const mismatches: string[] = [];
      for (const role of ROLES) {
        for (const scope of ['own', 'other'] as const) {
          const ctx: Ctx = {
            w,
            scope,
            teamId: scope === 'own' ? w.teamA : w.teamB,
            campaignId: scope === 'own' ? w.campaignA : w.campaignB,
            shiftId: scope === 'own' ? w.shiftA : w.shiftB,
            mailId,
            t: scope === 'own' ? w.a : w.b,
            role,
            userId: role === 'signedOut' ? null : w.users[role],
          };
          const e = row.expect[role];
          const expected = Array.isArray(e) ? e[scope === 'own' ? 0 : 1] : e;
          actAs(role === 'signedOut' ? null : w.users[role]);
          const { status, json } = await callRoute(handler!, { method: row.method, ...(await row.request(ctx)) });
          if (status !== expected) {
            mismatches.push(
              `${role}/${scope}: expected ${expected}, got ${status} ${JSON.stringify(json).slice(0, 200)}`,
            );
          }
        }
      }
      expect(mismatches).toEqual([]);
    });
  }

  it('rows that run elsewhere say where', () => {
    for (const row of ROWS.filter((r) => r.coveredElsewhere)) {
      expect(row.coveredElsewhere).toMatch(/tests\/e2e\//);
    }
  });
});
