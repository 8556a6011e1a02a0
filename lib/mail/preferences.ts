// Which e-mails each user gets (C11). Stored per user in users.notification_prefs (a JSON object of
// `kind: boolean`; a missing key means "on"). Invitations and password resets are not in it: they always go,
// because they are the only way into an account.
import { Op } from 'sequelize';
import { z } from 'zod';
import { User } from '@/models';

/** Notices a user may turn off, with the words of the preferences page. */
export const OPTIONAL_NOTICES = {
  shift_receipt: {
    label: 'Shift receipts',
    hint: 'The end-of-shift list of stored and quarantined files, for the shift’s operator and the team’s analysts.',
  },
  reduction_failed: {
    label: 'Reduction failures',
    hint: 'When a reduction of your team’s scans fails, with the reason and the scan page.',
  },
  fixity_alert: {
    label: 'Fixity alerts',
    hint: 'When a stored raw file no longer matches its checksum (data stewards).',
  },
} as const;
export type OptionalNotice = keyof typeof OPTIONAL_NOTICES;
export const OPTIONAL_NOTICE_KINDS = Object.keys(OPTIONAL_NOTICES) as OptionalNotice[];

/** Notices that always go, whatever the preferences say. */
export const ALWAYS_SENT = ['Invitations', 'Password resets'] as const;

export const notificationPrefsSchema = z
  .object({
    shift_receipt: z.boolean(),
    reduction_failed: z.boolean(),
    fixity_alert: z.boolean(),
  })
  .strict();
export type NotificationPrefs = z.infer<typeof notificationPrefsSchema>;

/** The stored object read with every optional notice present (missing or unreadable keys are "on"). */
export function effectivePrefs(stored: unknown): NotificationPrefs {
  const obj = stored && typeof stored === 'object' ? (stored as Record<string, unknown>) : {};
  const out = {} as NotificationPrefs;
  for (const k of OPTIONAL_NOTICE_KINDS) out[k] = obj[k] !== false;
  return out;
}

export function wantsNotice(stored: unknown, kind: OptionalNotice): boolean {
  return effectivePrefs(stored)[kind];
}

export async function getNotificationPrefs(userId: number): Promise<NotificationPrefs> {
  const u = await User.findByPk(userId, { attributes: ['id', 'notification_prefs'] });
  return effectivePrefs(u?.notification_prefs ?? null);
}

export async function setNotificationPrefs(userId: number, prefs: NotificationPrefs): Promise<NotificationPrefs> {
  const clean = notificationPrefsSchema.parse(prefs);
  await User.update({ notification_prefs: { ...clean } }, { where: { id: userId } });
  return clean;
}

/**
 * The addresses among `emails` whose accounts have not turned `kind` off (compared case-insensitively; an address
 * with no account, e.g. an external one, is kept).
 */
export async function recipientsWanting(emails: string[], kind: OptionalNotice): Promise<string[]> {
  const unique = [...new Set(emails.map((e) => e.toLowerCase()))];
  if (unique.length === 0) return [];
  const users = await User.findAll({
    where: { email: { [Op.in]: unique } },
    attributes: ['email', 'notification_prefs'],
  });
  const off = new Set(users.filter((u) => !wantsNotice(u.notification_prefs, kind)).map((u) => u.email.toLowerCase()));
  return unique.filter((e) => !off.has(e));
}
