// E-mail to a team's analysts when a reduction fails (C11). Recipients are the active members whose team role
// may start reductions (asked through the policy table, never by comparing role names) and who have not turned
// the `reduction_failed` notification off in their preferences.
import { getEnv } from '@/lib/env';
import { log } from '@/lib/log';
import { type OptionalNotice, wantsNotice } from '@/lib/mail/preferences';
import { sendMail } from '@/lib/mail/transport';
import { PERMISSIONS_BY_TEAM_ROLE } from '@/lib/policy';
import { Campaign, Membership, Team, User } from '@/models';

/** Key in users.notification_prefs (absent = on). */
export const REDUCTION_FAILED_PREF = 'reduction_failed' satisfies OptionalNotice;

export interface FailureNotice {
  teamId: number;
  campaignId: number;
  scanId: number;
  scanTitle: string | null;
  fileName: string | null;
  calibrationVersion: number | null;
  settingsVersion: number | null;
  message: string;
  attempts: number;
}

/** Addresses that get the failure e-mail for a team. */
export async function reductionFailureRecipients(teamId: number): Promise<string[]> {
  const members = await Membership.findAll({
    where: { team_id: teamId },
    include: [{ model: User, as: 'user', attributes: ['email', 'is_active', 'notification_prefs'] }],
  });
  const out = new Set<string>();
  for (const m of members) {
    const u = (m as Membership & { user?: User }).user;
    if (!u?.is_active) continue;
    if (!PERMISSIONS_BY_TEAM_ROLE[m.role].has('reduction.start')) continue;
    if (!wantsNotice(u.notification_prefs, REDUCTION_FAILED_PREF)) continue;
    out.add(u.email);
  }
  return [...out].sort();
}

/** Sends the failure e-mail; a mail problem is logged, never thrown (the failure itself is already recorded). */
export async function notifyReductionFailure(notice: FailureNotice): Promise<{ sent: number }> {
  try {
    const to = await reductionFailureRecipients(notice.teamId);
    if (to.length === 0) return { sent: 0 };
    const [team, campaign] = await Promise.all([
      Team.findByPk(notice.teamId, { attributes: ['name'] }),
      Campaign.findByPk(notice.campaignId, { attributes: ['name'] }),
    ]);
    const url = `${getEnv().APP_ORIGIN}/scans/${notice.scanId}`;
    const label = notice.scanTitle || notice.fileName || `scan ${notice.scanId}`;
    const versions =
      notice.calibrationVersion != null && notice.settingsVersion != null
        ? `calibration v${notice.calibrationVersion}, analysis settings v${notice.settingsVersion}`
        : 'the chosen versions';
    const text = [
      `The reduction of ${label} (campaign “${campaign?.name ?? notice.campaignId}”, ${team?.name ?? 'your team'}) failed`,
      `after ${notice.attempts} attempt${notice.attempts === 1 ? '' : 's'} with ${versions}.`,
      '',
      'Reason:',
      notice.message,
      '',
      `Scan page: ${url}`,
      '',
      'The raw file is kept unchanged. Fix the calibration or settings and reduce again from the scan page.',
      'You get this e-mail because you may start reductions in this team; turn it off in your notification settings.',
    ].join('\n');
    await sendMail({ to, subject: `Lobeline: reduction of ${label} failed`, text });
    return { sent: to.length };
  } catch (err) {
    log.error('reduction failure e-mail not sent', { scanId: notice.scanId, err });
    return { sent: 0 };
  }
}
