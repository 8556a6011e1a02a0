// GET / PUT /api/me/notifications: which e-mails the signed-in user gets (C11). Only their own account: the user is
// the session's, never an id from the request. Invitations and password resets always go and are not settable.
import { apiRoute } from '@/lib/api/route';
import { recordAudit } from '@/lib/audit';
import { getNotificationPrefs, notificationPrefsSchema, setNotificationPrefs } from '@/lib/mail/preferences';
import { authorizeOwn } from '@/lib/policy';

export const dynamic = 'force-dynamic';

export const GET = apiRoute({}, async ({ actor }) => {
  authorizeOwn(actor, 'account.notifications', actor.userId);
  return { prefs: await getNotificationPrefs(actor.userId) };
});

export const PUT = apiRoute({ body: notificationPrefsSchema }, async ({ actor, body, ip }) => {
  authorizeOwn(actor, 'account.notifications', actor.userId);
  const prefs = await setNotificationPrefs(actor.userId, body);
  await recordAudit({
    action: 'user.updated',
    actorId: actor.userId,
    actorEmail: actor.email,
    targetType: 'user',
    targetId: actor.userId,
    ip,
    details: { notifications: Object.entries(prefs).map(([k, v]) => `${k.replace(/_/g, ' ')} ${v ? 'on' : 'off'}`) },
  });
  return { prefs };
});
