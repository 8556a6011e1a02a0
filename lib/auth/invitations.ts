// Invitations (C1): an administrator invites an e-mail address to a team with a role, or to a facility role.
// A new address gets a single-use link valid for 7 days; an existing account is given the access at once and told
// by e-mail (an invitation link never replaces the password of an account that has one).
import { recordAudit } from '@/lib/audit';
import {
  acceptInvitationRecord,
  type By,
  findInvitationByHash,
  getTeamById,
  getUserByEmail,
  grantFacilityRole,
  insertInvitation,
  normalizeEmail,
  upsertMembership,
} from '@/lib/db/queries/accounts';
import { AppError } from '@/lib/errors';
import { sendMail } from '@/lib/mail/transport';
import type { FacilityRole, TeamRole } from '@/lib/policy';
import { addedMail, invitationMail } from './emails';
import { hashPassword } from './password';
import { hashToken, INVITATION_TTL_MS, looksLikeToken, newToken, type TokenState } from './tokens';

const ROLE_WORDS: Record<TeamRole, string> = { operator: 'an operator', analyst: 'an analyst', pi: 'a PI' };
const FACILITY_WORDS: Record<FacilityRole, string> = { steward: 'a data steward', admin: 'an administrator' };

export interface InviteInput {
  email: string;
  name: string | null;
  teamId: number | null;
  role: TeamRole | null;
  facilityRole: FacilityRole | null;
}

export type InviteOutcome =
  | { status: 'invited'; invitationId: number; expiresAt: string }
  | { status: 'added'; userId: number };

export async function inviteUser(input: InviteInput, by: By & { name: string }): Promise<InviteOutcome> {
  const email = normalizeEmail(input.email);
  let what: string;
  if (input.teamId && input.role) {
    const team = await getTeamById({ teamId: input.teamId });
    if (!team)
      throw new AppError('not_found:team', {
        message: 'There is no such team.',
        details: ['teamId: There is no such team.'],
      });
    what = `${ROLE_WORDS[input.role]} in ${team.name}`;
  } else if (input.facilityRole) {
    what = `${FACILITY_WORDS[input.facilityRole]} of the facility`;
  } else {
    throw new AppError('bad_request:invitation', {
      message: 'Choose a team and role, or a facility role.',
      details: ['role: Choose a team and role, or a facility role.'],
    });
  }

  const existing = await getUserByEmail({ email });
  if (existing?.isActive && existing.hasPassword) {
    if (input.teamId && input.role)
      await upsertMembership({ userId: existing.id, teamId: input.teamId, role: input.role }, by);
    if (input.facilityRole) await grantFacilityRole({ userId: existing.id, role: input.facilityRole }, by);
    await sendMail({ to: email, ...addedMail({ name: existing.name, invitedBy: by.name, what }) });
    return { status: 'added', userId: existing.id };
  }
  if (existing && !existing.isActive) {
    throw new AppError('conflict:invitation', {
      message: 'This account is deactivated. Reactivate it on the users page instead of inviting it again.',
    });
  }

  const { token, hash } = newToken();
  const expiresAt = new Date(Date.now() + INVITATION_TTL_MS);
  const { id } = await insertInvitation(
    {
      email,
      name: input.name,
      teamId: input.teamId && input.role ? input.teamId : null,
      role: input.teamId && input.role ? input.role : null,
      facilityRole: input.facilityRole,
      tokenHash: hash,
      expiresAt,
    },
    by,
  );
  await sendMail({ to: email, ...invitationMail({ token, invitedBy: by.name, what }) });
  return { status: 'invited', invitationId: id, expiresAt: expiresAt.toISOString() };
}

export interface InvitationView {
  state: TokenState;
  email: string | null;
  name: string | null;
  teamName: string | null;
  role: TeamRole | null;
  facilityRole: FacilityRole | null;
}

/** What an invitation link stands for. A link that cannot be used is audited (`invitation.accepted`, failed). */
export async function inspectInvitation(token: string, ip: string): Promise<InvitationView> {
  const { state, invitation } = looksLikeToken(token)
    ? await findInvitationByHash({ tokenHash: hashToken(token) })
    : { state: 'unknown' as const, invitation: null };
  if (state !== 'valid') {
    await recordAudit({
      action: 'invitation.accepted',
      actorEmail: invitation?.email ?? null,
      teamId: invitation?.teamId ?? null,
      targetType: 'invitation',
      targetId: invitation?.id ?? null,
      ip,
      outcome: 'failed',
      details: { reason: state, stage: 'opened' },
    });
  }
  return {
    state,
    email: invitation?.email ?? null,
    name: invitation?.name ?? null,
    teamName: invitation?.teamName ?? null,
    role: invitation?.role ?? null,
    facilityRole: invitation?.facilityRole ?? null,
  };
}

export async function acceptInvitation(input: {
  token: string;
  name: string;
  password: string;
  ip: string;
}): Promise<{ ok: true; email: string } | { ok: false; state: TokenState }> {
  if (!looksLikeToken(input.token)) {
    await recordAudit({
      action: 'invitation.accepted',
      ip: input.ip,
      outcome: 'failed',
      details: { reason: 'unknown', stage: 'accept' },
    });
    return { ok: false, state: 'unknown' };
  }
  const passwordHash = await hashPassword(input.password);
  const r = await acceptInvitationRecord(
    { tokenHash: hashToken(input.token), name: input.name, passwordHash },
    input.ip,
  );
  if (!r.ok) {
    await recordAudit({
      action: 'invitation.accepted',
      actorEmail: r.email,
      ip: input.ip,
      outcome: 'failed',
      details: { reason: r.state, stage: 'accept' },
    });
    return { ok: false, state: r.state };
  }
  return { ok: true, email: r.email };
}
