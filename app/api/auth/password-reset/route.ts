// POST /api/auth/password-reset { email }: sends a reset link if the account exists. The answer is the same
// either way, and as fast: the account lookup and the e-mail run after the answer (schedulePasswordResetRequest),
// so neither the words nor the time of the answer tell who has an account.
import { apiRoute, jsonResponse } from '@/lib/api/route';
import { schedulePasswordResetRequest } from '@/lib/auth/password-reset';
import { resetRequestBody } from '../schema';

export const dynamic = 'force-dynamic';

export const POST = apiRoute({ auth: false, body: resetRequestBody }, async ({ body, ip }) => {
  schedulePasswordResetRequest({ email: body.email, ip });
  return jsonResponse(
    {
      ok: true,
      message:
        'If an active account uses this address, we have sent it a link to choose a new password. The link is valid for 1 hour.',
    },
    { status: 202 },
  );
});
