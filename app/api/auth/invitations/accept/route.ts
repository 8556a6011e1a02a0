// POST /api/auth/invitations/accept { token, name, password, confirm }: activates an invited account.
import { apiRoute, jsonResponse } from '@/lib/api/route';
import { acceptInvitation } from '@/lib/auth/invitations';
import { TOKEN_STATE_MESSAGES } from '@/lib/auth/tokens';
import { AppError } from '@/lib/errors';
import { acceptInvitationBody } from '../../schema';

export const dynamic = 'force-dynamic';

export const POST = apiRoute({ auth: false, body: acceptInvitationBody }, async ({ body, ip }) => {
  const r = await acceptInvitation({ token: body.token, name: body.name, password: body.password, ip });
  if (!r.ok) {
    const state = r.state === 'valid' ? 'unknown' : r.state;
    throw new AppError(state === 'unknown' ? 'not_found:invitation' : 'conflict:invitation', {
      message: TOKEN_STATE_MESSAGES[state].invitation,
    });
  }
  return jsonResponse({ ok: true, email: r.email }, { status: 201 });
});
