import 'server-only';
// Accounts, teams, memberships, facility roles, sign-in attempts: the data layer of lib/auth and the admin pages.
// Every function takes one object argument and returns plain DTOs (never model instances, never password hashes).
import { literal, Op, type Transaction, UniqueConstraintError } from 'sequelize';
import { recordAudit } from '@/lib/audit';
import { getDb } from '@/lib/db';
import { AppError } from '@/lib/errors';
import type { Actor, FacilityRole, TeamRole } from '@/lib/policy';
import { FACILITY_ROLES, TEAM_ROLES } from '@/lib/policy';
import {
  AnalysisSettingsVersion,
  AuditEvent,
  Campaign,
  DetectorCalibrationVersion,
  FacilityRoleGrant,
  Invitation,
  Membership,
  PasswordResetToken,
  SignInAttempt,
  Team,
  User,
} from '@/models';

// TYPES //

export interface UserDto {
  id: number;
  email: string;
  name: string;
  isActive: boolean;
  /** Whether a password is set (false for accounts invited but not yet activated). */
  hasPassword: boolean;
  lastSignInAt: string | null;
  createdAt: string;
  memberships: { teamId: number; teamSlug: string; teamName: string; role: TeamRole }[];
  facilityRoles: FacilityRole[];
}

export interface TeamDto {
  id: number;
  slug: string;
  name: string;
  description: string | null;
  memberCount: number;
}

// HELPERS //

/** Wraps driver errors as `*:database` (the user sees a generic sentence, the log gets the rest). */
export async function db<T>(what: string, fn: () => Promise<T>): Promise<T> {
  try {
    getDb();
    return await fn();
  } catch (err) {
    if (err instanceof AppError) throw err;
    const name = (err as Error)?.name ?? '';
    const unavailable = /Connection|Timeout|HostNotReachable|AccessDenied/.test(name);
    throw new AppError(unavailable ? 'unavailable:database' : 'internal:database', { cause: err, context: { what } });
  }
}

export function normalizeEmail(email: string): string {
  return email.trim().toLowerCase();
}

const iso = (d: Date | null | undefined) => (d ? new Date(d).toISOString() : null);

type UserWithRoles = User & {
  memberships?: (Membership & { team?: Team })[];
  facilityRoles?: FacilityRoleGrant[];
};

const userIncludes = () => [
  { model: Membership, as: 'memberships', include: [{ model: Team, as: 'team' }] },
  { model: FacilityRoleGrant, as: 'facilityRoles' },
];

function toUserDto(u: UserWithRoles): UserDto {
  return {
    id: u.id,
    email: u.email,
    name: u.name,
    isActive: !!u.is_active,
    hasPassword: !!u.password_hash,
    lastSignInAt: iso(u.last_sign_in_at),
    createdAt: iso(u.created_at) ?? '',
    memberships: (u.memberships ?? [])
      .filter((m) => m.team)
      .map((m) => ({ teamId: m.team_id, teamSlug: m.team!.slug, teamName: m.team!.name, role: m.role }))
      .sort((a, b) => a.teamName.localeCompare(b.teamName)),
    facilityRoles: (u.facilityRoles ?? [])
      .map((f) => f.role)
      .filter((r): r is FacilityRole => (FACILITY_ROLES as readonly string[]).includes(r))
      .sort(),
  };
}

// ACTOR //

/**
 * The actor for a user id, read fresh from the database; null when unknown or deactivated, and — when
 * `sessionVersion` is given — when the account's session version has moved on since the token was issued
 * (signed out elsewhere, password reset or changed). The version is compared in the same query, at no extra cost.
 */
export async function getActorByUserId({
  userId,
  sessionVersion,
}: {
  userId: number;
  sessionVersion?: number;
}): Promise<Actor | null> {
  return db('getActorByUserId', async () => {
    const user = (await User.findByPk(userId, { include: userIncludes() })) as UserWithRoles | null;
    if (!user?.is_active) return null;
    if (sessionVersion !== undefined && Number(user.session_version ?? 0) !== sessionVersion) return null;
    const dto = toUserDto(user);
    return {
      userId: dto.id,
      email: dto.email,
      name: dto.name,
      memberships: dto.memberships.filter((m) => (TEAM_ROLES as readonly string[]).includes(m.role)),
      facilityRoles: dto.facilityRoles,
    };
  });
}

// SIGN-IN //

export interface SignInUser {
  id: number;
  email: string;
  name: string;
  isActive: boolean;
  passwordHash: string | null;
  sessionVersion: number;
}

/** For the credentials check only: the one function that returns the password hash. */
export async function getUserForSignIn({ email }: { email: string }): Promise<SignInUser | null> {
  return db('getUserForSignIn', async () => {
    const u = await User.findOne({ where: { email: normalizeEmail(email) } });
    return u
      ? {
          id: u.id,
          email: u.email,
          name: u.name,
          isActive: !!u.is_active,
          passwordHash: u.password_hash,
          sessionVersion: Number(u.session_version ?? 0),
        }
      : null;
  });
}

export async function recordSignInAttempt({
  email,
  ip,
  succeeded,
}: {
  email: string;
  ip: string;
  succeeded: boolean;
}): Promise<void> {
  await db('recordSignInAttempt', async () => {
    await SignInAttempt.create({ email: normalizeEmail(email).slice(0, 254), ip: ip.slice(0, 64), succeeded });
  });
}

/** Ends every session of the account (their tokens carry the old version); returns the new version. */
export async function bumpSessionVersion({ userId }: { userId: number }, t?: Transaction): Promise<number> {
  const run = async (tx: Transaction | undefined) => {
    await User.increment('session_version', { by: 1, where: { id: userId }, transaction: tx });
    const u = await User.findByPk(userId, { attributes: ['session_version'], transaction: tx });
    return Number(u?.session_version ?? 0);
  };
  if (t) return run(t);
  return db('bumpSessionVersion', () => run(undefined));
}

/** The password hash and session version of an active account, for the password change check. */
export async function getPasswordCheck({
  userId,
}: {
  userId: number;
}): Promise<{ email: string; passwordHash: string | null } | null> {
  return db('getPasswordCheck', async () => {
    const u = await User.findByPk(userId, { attributes: ['email', 'password_hash', 'is_active'] });
    return u?.is_active ? { email: u.email, passwordHash: u.password_hash } : null;
  });
}

/** Sets a new password and ends every session of the account in one transaction; returns the new version. */
export async function changePasswordRecord(input: { userId: number; passwordHash: string }, by: By): Promise<number> {
  return db('changePasswordRecord', () =>
    getDb().transaction(async (t) => {
      await User.update({ password_hash: input.passwordHash }, { where: { id: input.userId }, transaction: t });
      const version = await bumpSessionVersion({ userId: input.userId }, t);
      await recordAudit(
        {
          action: 'auth.password_changed',
          ...auditBy(by),
          targetType: 'user',
          targetId: input.userId,
          details: { sessionsEnded: true },
        },
        { transaction: t },
      );
      return version;
    }),
  );
}

export async function markSignedIn({ userId }: { userId: number }): Promise<void> {
  await db('markSignedIn', async () => {
    await User.update({ last_sign_in_at: new Date() }, { where: { id: userId } });
  });
}

// USERS //

export async function getUserById({ userId }: { userId: number }): Promise<UserDto | null> {
  return db('getUserById', async () => {
    const u = (await User.findByPk(userId, { include: userIncludes() })) as UserWithRoles | null;
    return u ? toUserDto(u) : null;
  });
}

export async function getUserByEmail({ email }: { email: string }): Promise<UserDto | null> {
  return db('getUserByEmail', async () => {
    const u = (await User.findOne({
      where: { email: normalizeEmail(email) },
      include: userIncludes(),
    })) as UserWithRoles | null;
    return u ? toUserDto(u) : null;
  });
}

export async function listUsers(): Promise<UserDto[]> {
  return db('listUsers', async () => {
    const users = (await User.findAll({ include: userIncludes(), order: [['email', 'ASC']] })) as UserWithRoles[];
    return users.map(toUserDto);
  });
}

export async function setUserPassword(
  { userId, passwordHash }: { userId: number; passwordHash: string },
  t?: Transaction,
): Promise<void> {
  await User.update({ password_hash: passwordHash }, { where: { id: userId }, transaction: t });
}

export async function setUserActive({ userId, isActive }: { userId: number; isActive: boolean }): Promise<boolean> {
  return db('setUserActive', async () => {
    const [n] = await User.update({ is_active: isActive }, { where: { id: userId } });
    return n > 0;
  });
}

// TEAMS //

export async function listTeams({ ids }: { ids?: number[] } = {}): Promise<TeamDto[]> {
  return db('listTeams', async () => {
    const where = ids ? { id: { [Op.in]: ids.length ? ids : [0] } } : {};
    const teams = await Team.findAll({ where, order: [['name', 'ASC']] });
    const counts = (await Membership.count({
      where: { team_id: { [Op.in]: teams.map((t) => t.id).concat(0) } },
      group: ['team_id'],
    })) as unknown as { team_id: number; count: number }[];
    const byTeam = new Map(counts.map((c) => [Number(c.team_id), Number(c.count)]));
    return teams.map((t) => ({
      id: t.id,
      slug: t.slug,
      name: t.name,
      description: t.description,
      memberCount: byTeam.get(t.id) ?? 0,
    }));
  });
}

export async function getTeamById({ teamId }: { teamId: number }): Promise<TeamDto | null> {
  const [team] = await listTeams({ ids: [teamId] });
  return team ?? null;
}

export async function teamExists({ teamId }: { teamId: number }): Promise<boolean> {
  return db('teamExists', async () => (await Team.count({ where: { id: teamId } })) > 0);
}

// AUDIT CONTEXT //

/** Who does a change, for the audit rows written with it. */
export interface By {
  userId: number | null;
  email: string | null;
  ip: string;
}

const auditBy = (by: By) => ({ actorId: by.userId, actorEmail: by.email, ip: by.ip });

// TEAMS (ADMIN) //

export async function createTeam(
  input: { slug: string; name: string; description: string | null },
  by: By,
): Promise<{ id: number }> {
  return db('createTeam', async () => {
    try {
      return await getDb().transaction(async (t) => {
        const team = await Team.create(input, { transaction: t });
        await recordAudit(
          {
            action: 'team.created',
            ...auditBy(by),
            teamId: team.id,
            targetType: 'team',
            targetId: team.id,
            details: input,
          },
          { transaction: t },
        );
        return { id: team.id };
      });
    } catch (err) {
      if (err instanceof UniqueConstraintError) {
        throw new AppError('conflict:team', {
          message: 'A team with this short name already exists.',
          details: ['slug: A team with this short name already exists.'],
        });
      }
      throw err;
    }
  });
}

// MEMBERSHIPS AND FACILITY ROLES (ADMIN) //

/** Adds a membership, or changes the role when the user is already in the team. */
export async function upsertMembership(
  input: { userId: number; teamId: number; role: TeamRole },
  by: By,
  t?: Transaction,
): Promise<{ changed: 'added' | 'changed' | 'unchanged'; previousRole: TeamRole | null }> {
  const run = async (tx: Transaction) => {
    const existing = await Membership.findOne({
      where: { user_id: input.userId, team_id: input.teamId },
      transaction: tx,
      lock: tx.LOCK.UPDATE,
    });
    if (existing && existing.role === input.role) return { changed: 'unchanged' as const, previousRole: existing.role };
    if (existing) {
      const previousRole = existing.role;
      await existing.update({ role: input.role }, { transaction: tx });
      await recordAudit(
        {
          action: 'membership.changed',
          ...auditBy(by),
          teamId: input.teamId,
          targetType: 'user',
          targetId: input.userId,
          details: { from: previousRole, to: input.role },
        },
        { transaction: tx },
      );
      return { changed: 'changed' as const, previousRole };
    }
    await Membership.create({ user_id: input.userId, team_id: input.teamId, role: input.role }, { transaction: tx });
    await recordAudit(
      {
        action: 'membership.added',
        ...auditBy(by),
        teamId: input.teamId,
        targetType: 'user',
        targetId: input.userId,
        details: { role: input.role },
      },
      { transaction: tx },
    );
    return { changed: 'added' as const, previousRole: null };
  };
  if (t) return run(t);
  return db('upsertMembership', () => getDb().transaction(run));
}

export async function removeMembership(input: { userId: number; teamId: number }, by: By): Promise<boolean> {
  return db('removeMembership', () =>
    getDb().transaction(async (t) => {
      const existing = await Membership.findOne({
        where: { user_id: input.userId, team_id: input.teamId },
        transaction: t,
        lock: t.LOCK.UPDATE,
      });
      if (!existing) return false;
      await existing.destroy({ transaction: t });
      await recordAudit(
        {
          action: 'membership.removed',
          ...auditBy(by),
          teamId: input.teamId,
          targetType: 'user',
          targetId: input.userId,
          details: { role: existing.role },
        },
        { transaction: t },
      );
      return true;
    }),
  );
}

export async function grantFacilityRole(
  input: { userId: number; role: FacilityRole },
  by: By,
  t?: Transaction,
): Promise<boolean> {
  const run = async (tx: Transaction) => {
    const existing = await FacilityRoleGrant.findOne({
      where: { user_id: input.userId, role: input.role },
      transaction: tx,
    });
    if (existing) return false;
    await FacilityRoleGrant.create({ user_id: input.userId, role: input.role }, { transaction: tx });
    await recordAudit(
      {
        action: 'facility_role.granted',
        ...auditBy(by),
        targetType: 'user',
        targetId: input.userId,
        details: { role: input.role },
      },
      { transaction: tx },
    );
    return true;
  };
  if (t) return run(t);
  return db('grantFacilityRole', () => getDb().transaction(run));
}

export async function revokeFacilityRole(input: { userId: number; role: FacilityRole }, by: By): Promise<boolean> {
  return db('revokeFacilityRole', () =>
    getDb().transaction(async (t) => {
      const n = await FacilityRoleGrant.destroy({ where: { user_id: input.userId, role: input.role }, transaction: t });
      if (n === 0) return false;
      await recordAudit(
        {
          action: 'facility_role.revoked',
          ...auditBy(by),
          targetType: 'user',
          targetId: input.userId,
          details: { role: input.role },
        },
        { transaction: t },
      );
      return true;
    }),
  );
}

export async function countAdmins(): Promise<number> {
  return db('countAdmins', async () =>
    FacilityRoleGrant.count({
      where: { role: 'admin' },
      include: [{ model: User, as: 'user', where: { is_active: true }, attributes: [] }],
    }),
  );
}

export async function setUserActiveAudited(input: { userId: number; isActive: boolean }, by: By): Promise<boolean> {
  return db('setUserActiveAudited', () =>
    getDb().transaction(async (t) => {
      const user = await User.findByPk(input.userId, { transaction: t, lock: t.LOCK.UPDATE });
      if (!user) return false;
      if (!!user.is_active === input.isActive) return true;
      await user.update({ is_active: input.isActive }, { transaction: t });
      await recordAudit(
        {
          action: input.isActive ? 'user.updated' : 'user.deactivated',
          ...auditBy(by),
          targetType: 'user',
          targetId: input.userId,
          details: input.isActive ? { reactivated: true } : { email: user.email },
        },
        { transaction: t },
      );
      return true;
    }),
  );
}

// INVITATIONS //

export interface InvitationDto {
  id: number;
  email: string;
  name: string | null;
  teamId: number | null;
  teamName: string | null;
  role: TeamRole | null;
  facilityRole: FacilityRole | null;
  expiresAt: string;
  acceptedAt: string | null;
  revokedAt: string | null;
  createdAt: string;
}

function toInvitationDto(i: Invitation & { team?: Team | null }): InvitationDto {
  return {
    id: i.id,
    email: i.email,
    name: i.name,
    teamId: i.team_id,
    teamName: i.team?.name ?? null,
    role: i.role,
    facilityRole: i.facility_role,
    expiresAt: iso(i.expires_at) ?? '',
    acceptedAt: iso(i.accepted_at),
    revokedAt: iso(i.revoked_at),
    createdAt: iso(i.created_at) ?? '',
  };
}

export async function insertInvitation(
  input: {
    email: string;
    name: string | null;
    teamId: number | null;
    role: TeamRole | null;
    facilityRole: FacilityRole | null;
    tokenHash: string;
    expiresAt: Date;
  },
  by: By,
): Promise<{ id: number }> {
  return db('insertInvitation', () =>
    getDb().transaction(async (t) => {
      const inv = await Invitation.create(
        {
          email: normalizeEmail(input.email),
          name: input.name,
          team_id: input.teamId,
          role: input.role,
          facility_role: input.facilityRole,
          token_hash: input.tokenHash,
          invited_by: by.userId,
          expires_at: input.expiresAt,
          accepted_at: null,
          revoked_at: null,
        },
        { transaction: t },
      );
      await recordAudit(
        {
          action: 'invitation.created',
          ...auditBy(by),
          teamId: input.teamId,
          targetType: 'invitation',
          targetId: inv.id,
          details: { email: normalizeEmail(input.email), role: input.role, facilityRole: input.facilityRole },
        },
        { transaction: t },
      );
      return { id: inv.id };
    }),
  );
}

export async function listPendingInvitations(): Promise<InvitationDto[]> {
  return db('listPendingInvitations', async () => {
    const rows = await Invitation.findAll({
      where: { accepted_at: null, revoked_at: null, expires_at: { [Op.gt]: new Date() } },
      include: [{ model: Team, as: 'team' }],
      order: [['created_at', 'DESC']],
      limit: 200,
    });
    return rows.map(toInvitationDto);
  });
}

export async function revokeInvitation({ invitationId }: { invitationId: number }, by: By): Promise<boolean> {
  return db('revokeInvitation', () =>
    getDb().transaction(async (t) => {
      const inv = await Invitation.findByPk(invitationId, { transaction: t, lock: t.LOCK.UPDATE });
      if (!inv || inv.accepted_at || inv.revoked_at) return false;
      await inv.update({ revoked_at: new Date() }, { transaction: t });
      await recordAudit(
        {
          action: 'invitation.revoked',
          ...auditBy(by),
          teamId: inv.team_id,
          targetType: 'invitation',
          targetId: inv.id,
          details: { email: inv.email },
        },
        { transaction: t },
      );
      return true;
    }),
  );
}

export type StoredTokenState = 'valid' | 'expired' | 'used' | 'revoked' | 'unknown';

/** The state of a stored single-use link (invitation or reset token); used wins over revoked over expired. */
function tokenState(
  row: { usedAt: Date | null; revokedAt: Date | null; expiresAt: Date } | null,
  now = Date.now(),
): StoredTokenState {
  if (!row) return 'unknown';
  if (row.usedAt) return 'used';
  if (row.revokedAt) return 'revoked';
  if (new Date(row.expiresAt).getTime() <= now) return 'expired';
  return 'valid';
}

function invitationState(inv: Invitation | null): StoredTokenState {
  return tokenState(inv && { usedAt: inv.accepted_at, revokedAt: inv.revoked_at, expiresAt: inv.expires_at });
}

export async function findInvitationByHash({
  tokenHash,
}: {
  tokenHash: string;
}): Promise<{ state: StoredTokenState; invitation: InvitationDto | null }> {
  return db('findInvitationByHash', async () => {
    const inv = await Invitation.findOne({ where: { token_hash: tokenHash }, include: [{ model: Team, as: 'team' }] });
    return { state: invitationState(inv), invitation: inv ? toInvitationDto(inv) : null };
  });
}

/**
 * Accepts an invitation in one transaction (the row is locked, so a token works exactly once): creates the user or
 * sets the password of an account that has none, adds the membership or facility role, marks the invitation used.
 */
export async function acceptInvitationRecord(
  input: { tokenHash: string; name: string; passwordHash: string },
  ip: string,
): Promise<{ ok: true; userId: number; email: string } | { ok: false; state: StoredTokenState; email: string | null }> {
  return db('acceptInvitationRecord', () =>
    getDb().transaction(async (t) => {
      const inv = await Invitation.findOne({
        where: { token_hash: input.tokenHash },
        transaction: t,
        lock: t.LOCK.UPDATE,
      });
      const state = invitationState(inv);
      if (!inv || state !== 'valid') return { ok: false as const, state, email: inv?.email ?? null };
      let user = await User.findOne({ where: { email: inv.email }, transaction: t, lock: t.LOCK.UPDATE });
      if (user?.password_hash) {
        // An account that already has a password is never taken over through an invitation link.
        return { ok: false as const, state: 'used' as const, email: inv.email };
      }
      const by: By = { userId: null, email: inv.email, ip };
      if (!user) {
        user = await User.create(
          {
            email: inv.email,
            name: input.name,
            password_hash: input.passwordHash,
            notification_prefs: null,
            last_sign_in_at: null,
          },
          { transaction: t },
        );
        await recordAudit(
          {
            action: 'user.created',
            actorId: user.id,
            actorEmail: inv.email,
            ip,
            targetType: 'user',
            targetId: user.id,
            details: { via: 'invitation', invitationId: inv.id },
          },
          { transaction: t },
        );
      } else {
        await user.update({ name: input.name, password_hash: input.passwordHash, is_active: true }, { transaction: t });
      }
      const self: By = { ...by, userId: user.id };
      if (inv.team_id && inv.role) {
        await upsertMembership({ userId: user.id, teamId: inv.team_id, role: inv.role }, self, t);
      }
      if (inv.facility_role) await grantFacilityRole({ userId: user.id, role: inv.facility_role }, self, t);
      await inv.update({ accepted_at: new Date() }, { transaction: t });
      await recordAudit(
        {
          action: 'invitation.accepted',
          actorId: user.id,
          actorEmail: inv.email,
          teamId: inv.team_id,
          ip,
          targetType: 'invitation',
          targetId: inv.id,
        },
        { transaction: t },
      );
      return { ok: true as const, userId: user.id, email: inv.email };
    }),
  );
}

// PASSWORD RESETS //

export async function countRecentResetTokens({ userId, since }: { userId: number; since: Date }): Promise<number> {
  return db('countRecentResetTokens', async () =>
    PasswordResetToken.count({ where: { user_id: userId, created_at: { [Op.gte]: since } } }),
  );
}

export async function insertResetToken(input: { userId: number; tokenHash: string; expiresAt: Date }): Promise<void> {
  await db('insertResetToken', async () => {
    await PasswordResetToken.create({
      user_id: input.userId,
      token_hash: input.tokenHash,
      expires_at: input.expiresAt,
      used_at: null,
    });
  });
}

function resetState(row: PasswordResetToken | null): StoredTokenState {
  return tokenState(row && { usedAt: row.used_at, revokedAt: null, expiresAt: row.expires_at });
}

export async function findResetByHash({
  tokenHash,
}: {
  tokenHash: string;
}): Promise<{ state: StoredTokenState; userId: number | null; email: string | null }> {
  return db('findResetByHash', async () => {
    const row = await PasswordResetToken.findOne({
      where: { token_hash: tokenHash },
      include: [{ model: User, as: 'user' }],
    });
    const user = (row as (PasswordResetToken & { user?: User }) | null)?.user;
    const state = user && !user.is_active ? 'revoked' : resetState(row);
    return { state, userId: row?.user_id ?? null, email: user?.email ?? null };
  });
}

/** Sets the new password and uses up the token (and every other open token of the account) in one transaction. */
export async function completeResetRecord(
  input: { tokenHash: string; passwordHash: string },
  ip: string,
): Promise<
  { ok: true; userId: number; email: string } | { ok: false; state: StoredTokenState; userId: number | null }
> {
  return db('completeResetRecord', () =>
    getDb().transaction(async (t) => {
      const row = await PasswordResetToken.findOne({
        where: { token_hash: input.tokenHash },
        transaction: t,
        lock: t.LOCK.UPDATE,
      });
      let state = resetState(row);
      const user = row ? await User.findByPk(row.user_id, { transaction: t, lock: t.LOCK.UPDATE }) : null;
      if (state === 'valid' && !user?.is_active) state = 'revoked';
      if (!row || !user || state !== 'valid') return { ok: false as const, state, userId: row?.user_id ?? null };
      const now = new Date();
      await user.update({ password_hash: input.passwordHash }, { transaction: t });
      // A reset ends every session of the account (whoever knew the old password is signed out at once).
      await bumpSessionVersion({ userId: user.id }, t);
      await PasswordResetToken.update({ used_at: now }, { where: { user_id: user.id, used_at: null }, transaction: t });
      await recordAudit(
        {
          action: 'auth.password_reset',
          actorId: user.id,
          actorEmail: user.email,
          ip,
          targetType: 'user',
          targetId: user.id,
        },
        { transaction: t },
      );
      return { ok: true as const, userId: user.id, email: user.email };
    }),
  );
}

// AUDIT TRAIL (READ) //

export interface AuditEventDto {
  id: number;
  at: string;
  action: string;
  actorId: number | null;
  actorEmail: string | null;
  teamId: number | null;
  teamName: string | null;
  targetType: string | null;
  targetId: string | null;
  ip: string | null;
  outcome: 'ok' | 'refused' | 'failed';
  details: Record<string, unknown> | null;
  /** The campaign of the event and its name, and the SHA-256 of the object it concerns, when known. */
  campaignId: number | null;
  campaignName: string | null;
  sha256: string | null;
  /**
   * The words the rest of the app uses for the ids in this event: `target` for the object (e.g. "calibration v2"),
   * and per detail key (calibrationId → "calibration v2", settingsId → "settings v1", campaignId → its name).
   */
  labels: { target?: string; details: Record<string, string> };
}

const VERSION_TARGETS: Record<string, 'calibration' | 'settings'> = {
  detector_calibration: 'calibration',
  analysis_settings: 'settings',
};

/** Version numbers and campaign names for the ids that audit events carry, in three queries. */
async function auditLabels(rows: AuditEvent[]): Promise<(r: AuditEvent) => AuditEventDto['labels']> {
  const cal = new Set<number>();
  const set = new Set<number>();
  const camp = new Set<number>();
  const num = (v: unknown) => (typeof v === 'number' && Number.isInteger(v) ? v : Number.NaN);
  for (const r of rows) {
    const d = (r.details ?? {}) as Record<string, unknown>;
    const kind = r.target_type ? VERSION_TARGETS[r.target_type] : undefined;
    const tid = Number(r.target_id);
    if (kind === 'calibration' && Number.isInteger(tid)) cal.add(tid);
    if (kind === 'settings' && Number.isInteger(tid)) set.add(tid);
    if (r.target_type === 'campaign' && Number.isInteger(tid)) camp.add(tid);
    if (Number.isInteger(num(d.calibrationId))) cal.add(num(d.calibrationId));
    if (Number.isInteger(num(d.settingsId))) set.add(num(d.settingsId));
    if (Number.isInteger(num(d.campaignId))) camp.add(num(d.campaignId));
    if (Number.isInteger(num(d.previousId)) && kind === 'calibration') cal.add(num(d.previousId));
    if (Number.isInteger(num(d.previousId)) && kind === 'settings') set.add(num(d.previousId));
  }
  const [cals, sets, camps] = await Promise.all([
    cal.size
      ? DetectorCalibrationVersion.findAll({
          where: { id: { [Op.in]: [...cal] } },
          attributes: ['id', 'version'],
          raw: true,
        })
      : [],
    set.size
      ? AnalysisSettingsVersion.findAll({
          where: { id: { [Op.in]: [...set] } },
          attributes: ['id', 'version'],
          raw: true,
        })
      : [],
    camp.size ? Campaign.findAll({ where: { id: { [Op.in]: [...camp] } }, attributes: ['id', 'name'], raw: true }) : [],
  ]);
  const calV = new Map(cals.map((c) => [c.id, `calibration v${c.version}`]));
  const setV = new Map(sets.map((c) => [c.id, `settings v${c.version}`]));
  const campN = new Map(camps.map((c) => [c.id, c.name]));
  return (r) => {
    const d = (r.details ?? {}) as Record<string, unknown>;
    const kind = r.target_type ? VERSION_TARGETS[r.target_type] : undefined;
    const tid = Number(r.target_id);
    const labels: AuditEventDto['labels'] = { details: {} };
    const versions = kind === 'calibration' ? calV : kind === 'settings' ? setV : null;
    if (versions) {
      labels.target =
        versions.get(tid) ?? (typeof d.version === 'number' ? `${kind} v${d.version}` : `${kind} (removed)`);
    }
    if (r.target_type === 'campaign') labels.target = campN.get(tid) ? `campaign “${campN.get(tid)}”` : undefined;
    const put = (key: string, map: Map<number, string>) => {
      const v = map.get(num(d[key]));
      if (v) labels.details[key] = v;
    };
    put('calibrationId', calV);
    put('settingsId', setV);
    if (kind === 'calibration') put('previousId', calV);
    if (kind === 'settings') put('previousId', setV);
    const cn = campN.get(num(d.campaignId));
    if (cn) labels.details.campaignId = cn;
    return labels;
  };
}

/** Campaigns an audit reader may filter by (their teams', or every team's), by team and name; at most 1000. */
export async function listAuditCampaigns(input: {
  teamIds: number[] | 'all';
}): Promise<{ id: number; name: string; teamName: string }[]> {
  if (input.teamIds !== 'all' && input.teamIds.length === 0) return [];
  return db('listAuditCampaigns', async () => {
    const rows = await Campaign.findAll({
      where: input.teamIds === 'all' ? {} : { team_id: { [Op.in]: input.teamIds } },
      include: [{ model: Team, as: 'team', attributes: ['name'] }],
      attributes: ['id', 'name'],
      order: [
        [{ model: Team, as: 'team' }, 'name', 'ASC'],
        ['name', 'ASC'],
      ],
      limit: 1000,
    });
    return rows.map((c) => ({ id: c.id, name: c.name, teamName: (c as Campaign & { team?: Team }).team?.name ?? '' }));
  });
}

/** Audit events, newest first. `teamIds: 'all'` for facility readers; otherwise only events of those teams. */
export async function listAuditEvents(input: {
  teamIds: number[] | 'all';
  teamId?: number;
  action?: string;
  /** Exactly these actions (a kind of event from lib/audit-kinds.ts). */
  actions?: readonly string[];
  actor?: string;
  outcome?: 'ok' | 'refused' | 'failed';
  campaignId?: number;
  /** A SHA-256 (or its first 6+ hex digits), or part of a raw file's name: the events of matching files. */
  object?: string;
  /** Events at or after this moment. */
  from?: Date;
  /** Events before this moment. */
  before?: Date;
  page: number;
  pageSize: number;
}): Promise<{ events: AuditEventDto[]; total: number }> {
  return db('listAuditEvents', async () => {
    const where: Record<string | symbol, unknown> = {};
    if (input.from || input.before) {
      where.at = {
        ...(input.from ? { [Op.gte]: input.from } : {}),
        ...(input.before ? { [Op.lt]: input.before } : {}),
      };
    }
    if (input.teamIds !== 'all') where.team_id = { [Op.in]: input.teamIds.length ? input.teamIds : [0] };
    if (input.teamId) {
      where.team_id = input.teamIds === 'all' || input.teamIds.includes(input.teamId) ? input.teamId : { [Op.in]: [0] };
    }
    if (input.action) where.action = { [Op.like]: `${input.action.replace(/[%_\\]/g, '\\$&')}%` };
    if (input.actions) where[Op.and] = [{ action: { [Op.in]: [...input.actions] } }];
    if (input.campaignId) where.campaign_id = input.campaignId;
    if (input.object) {
      const text = input.object.trim();
      const conditions: unknown[] = [];
      if (/^[0-9a-f]{6,64}$/i.test(text)) conditions.push({ sha256: { [Op.like]: `${text.toLowerCase()}%` } });
      const like = getDb().escape(`%${text.replace(/[%_\\]/g, '\\$&')}%`);
      conditions.push({
        sha256: { [Op.in]: literal(`(SELECT rf.sha256 FROM raw_files rf WHERE rf.original_name LIKE ${like})`) },
      });
      where[Op.or] = conditions;
    }
    if (input.actor) where.actor_email = { [Op.like]: `%${input.actor.replace(/[%_\\]/g, '\\$&')}%` };
    if (input.outcome) where.outcome = input.outcome;
    const { rows, count } = await AuditEvent.findAndCountAll({
      where,
      order: [
        ['at', 'DESC'],
        ['id', 'DESC'],
      ],
      limit: input.pageSize,
      offset: (input.page - 1) * input.pageSize,
    });
    const teamIds = [...new Set(rows.map((r) => r.team_id).filter((x): x is number => x != null))];
    const teams = teamIds.length ? await Team.findAll({ where: { id: { [Op.in]: teamIds } }, raw: true }) : [];
    const names = new Map(teams.map((t) => [t.id, t.name]));
    const labelsOf = await auditLabels(rows);
    const campaignIds = [...new Set(rows.map((r) => r.campaign_id).filter((x): x is number => x != null))];
    const campaigns = campaignIds.length
      ? await Campaign.findAll({ where: { id: { [Op.in]: campaignIds } }, attributes: ['id', 'name'], raw: true })
      : [];
    const campaignNames = new Map(campaigns.map((c) => [c.id, c.name]));
    return {
      total: count,
      events: rows.map((r) => ({
        id: Number(r.id),
        at: iso(r.at) ?? '',
        action: r.action,
        actorId: r.actor_id,
        actorEmail: r.actor_email,
        teamId: r.team_id,
        teamName: r.team_id != null ? (names.get(r.team_id) ?? null) : null,
        targetType: r.target_type,
        targetId: r.target_id,
        ip: r.ip,
        outcome: r.outcome,
        details: r.details,
        campaignId: r.campaign_id ?? null,
        campaignName: r.campaign_id != null ? (campaignNames.get(r.campaign_id) ?? null) : null,
        sha256: r.sha256 ?? null,
        labels: labelsOf(r),
      })),
    };
  });
}
