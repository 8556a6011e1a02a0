// POST /api/me/password { currentPassword, password, confirm }: the signed-in user changes their password. Every
// other session of the account ends at once; this browser's session is re-issued and stays signed in.
import { z } from 'zod';
import { apiRoute, jsonResponse } from '@/lib/api/route';
import { changePassword, reissuedSessionCookie } from '@/lib/auth/change-password';
import { passwordSchema } from '@/lib/auth/password';

export const dynamic = 'force-dynamic';

const body = z
  .object({
    currentPassword: z
      .string({ error: 'Enter your current password.' })
      .min(1, 'Enter your current password.')
      .max(200),
    password: passwordSchema,
    confirm: z.string({ error: 'Repeat the new password.' }),
  })
  .refine((v) => v.password === v.confirm, { path: ['confirm'], message: 'The two passwords are not the same.' });

export const POST = apiRoute({ body }, async ({ actor, body, ip }) => {
  // Every signed-in user may change their own password: no role is involved, so there is no policy action.
  const { sessionVersion } = await changePassword({
    userId: actor.userId,
    currentPassword: body.currentPassword,
    newPassword: body.password,
    by: { userId: actor.userId, email: actor.email, ip },
  });
  const cookie = await reissuedSessionCookie(sessionVersion);
  return jsonResponse(
    { ok: true, message: 'Your password is changed. Your other sessions have been signed out.' },
    { headers: cookie ? { 'set-cookie': cookie } : {} },
  );
});
