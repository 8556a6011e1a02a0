// GET /api/admin/mailbox/[messageId]: one caught message (development and tests only).
import { z } from 'zod';
import { apiRoute } from '@/lib/api/route';
import { AppError } from '@/lib/errors';
import { catcherDir, readCaughtMessage } from '@/lib/mail/catcher-store';
import { authorize } from '@/lib/policy';

export const dynamic = 'force-dynamic';

const params = z.object({ messageId: z.string().regex(/^[A-Za-z0-9_-]{1,128}$/, 'is not a message id') });

export const GET = apiRoute({ params }, async ({ actor, params }) => {
  authorize(actor, 'admin.mailbox');
  if (!catcherDir()) throw new AppError('not_found:api', { message: 'The development mailbox is not enabled here.' });
  const message = await readCaughtMessage(params.messageId);
  if (!message) throw new AppError('not_found:api', { message: 'There is no such message.' });
  return { message };
});
