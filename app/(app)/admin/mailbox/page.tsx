import type { Metadata } from 'next';
import { forbidden, notFound } from 'next/navigation';
import { Mailbox } from '@/components/admin/mailbox';
import { PageHeader } from '@/components/ui/page-header';
import { requireActor } from '@/lib/auth/actor';
import { catcherDir } from '@/lib/mail/catcher-store';
import { can } from '@/lib/policy';

export const metadata: Metadata = { title: 'Sent notices (development)' };
export const dynamic = 'force-dynamic';

// Only where the local SMTP catcher runs (MAIL_CATCHER_DIR set: development and tests).
export default async function MailboxPage() {
  if (!catcherDir()) notFound();
  const actor = await requireActor();
  if (!can(actor, 'admin.mailbox')) forbidden(); // the sentence: REFUSALS in components/shell/forbidden.tsx
  return (
    <>
      <PageHeader
        eyebrow="Development"
        title="Sent notices"
        description="Every e-mail Lobeline sent on this machine, by kind of notice. The local SMTP catcher keeps them; nothing leaves this machine."
      />
      <Mailbox />
    </>
  );
}
