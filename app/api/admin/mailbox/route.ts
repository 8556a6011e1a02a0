// GET /api/admin/mailbox: messages caught by the local SMTP catcher (development and tests only; 404 when
// MAIL_CATCHER_DIR is not set, i.e. in production).
import { apiRoute } from '@/lib/api/route';
import { AppError } from '@/lib/errors';
import { catcherDir, listCaughtMessages } from '@/lib/mail/catcher-store';
import { noticeFacts, noticeKind } from '@/lib/mail/notice-kinds';
import { authorize } from '@/lib/policy';

export const dynamic = 'force-dynamic';

export const GET = apiRoute({}, async ({ actor }) => {
  authorize(actor, 'admin.mailbox');
  if (!catcherDir()) throw new AppError('not_found:api', { message: 'The development mailbox is not enabled here.' });
  const messages = await listCaughtMessages({ limit: 200 });
  return {
    messages: messages.map((m) => {
      const kind = noticeKind(m.subject);
      return {
        id: m.id,
        date: m.date,
        from: m.from,
        to: m.to,
        subject: m.subject,
        kind,
        facts: noticeFacts(kind, m.subject, m.text),
      };
    }),
  };
});
