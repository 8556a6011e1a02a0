import type { Metadata } from 'next';
import { NotificationSettings } from '@/components/shell/notification-settings';
import { PageHeader } from '@/components/ui/page-header';
import { requireActor } from '@/lib/auth/actor';
import { ALWAYS_SENT, getNotificationPrefs, OPTIONAL_NOTICES } from '@/lib/mail/preferences';
import { authorizeOwn } from '@/lib/policy';

export const metadata: Metadata = { title: 'E-mail notifications' };
export const dynamic = 'force-dynamic';

// C11: the signed-in user chooses which e-mails they get; the choices are read again by every sender.
export default async function NotificationsPage() {
  const actor = await requireActor();
  authorizeOwn(actor, 'account.notifications', actor.userId);
  const prefs = await getNotificationPrefs(actor.userId);
  return (
    <div className="mx-auto max-w-2xl">
      <PageHeader
        eyebrow={actor.email}
        title="E-mail notifications"
        description="Choose which notices Lobeline sends to your address. The same facts stay visible in the app."
      />
      <NotificationSettings
        initial={prefs}
        notices={Object.entries(OPTIONAL_NOTICES).map(([kind, n]) => ({ kind, label: n.label, hint: n.hint }))}
        alwaysSent={[...ALWAYS_SENT]}
      />
    </div>
  );
}
