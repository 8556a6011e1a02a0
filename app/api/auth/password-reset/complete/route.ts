// POST /api/auth/password-reset/complete { token, password, confirm }: sets a new password with a reset link.
import { apiRoute } from '@/lib/api/route';
import { completePasswordReset } from '@/lib/auth/password-reset';
import { TOKEN_STATE_MESSAGES } from '@/lib/auth/tokens';
import { AppError } from '@/lib/errors';
import { resetCompleteBody } from '../../schema';

export const dynamic = 'force-dynamic';

export const POST = apiRoute({ auth: false, body: resetCompleteBody }, async ({ body, ip }) => {
  const r = await completePasswordReset({ token: body.token, password: body.password, ip });
  if (!r.ok) {
    const state = r.state === 'valid' ? 'unknown' : r.state;
    throw new AppError(state === 'unknown' ? 'not_found:auth' : 'conflict:auth', {
      message: TOKEN_STATE_MESSAGES[state].reset,
    });
  }
  return { ok: true, email: r.email };
});
