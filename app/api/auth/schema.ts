import { z } from 'zod';
import { passwordSchema } from '@/lib/auth/password';

export const emailSchema = z
  .string({ error: 'Enter your e-mail address.' })
  .trim()
  .toLowerCase()
  .pipe(z.email('Enter a valid e-mail address.').max(254, 'The e-mail address is too long.'));

const token = z.string({ error: 'The link is incomplete.' }).min(1, 'The link is incomplete.').max(200);
const confirm = z.string({ error: 'Repeat the password.' });
const samePassword = (v: { password: string; confirm: string }) => v.password === v.confirm;
const sameMessage = { path: ['confirm'], message: 'The two passwords are not the same.' };

export const resetRequestBody = z.object({ email: emailSchema });

export const resetCompleteBody = z
  .object({ token, password: passwordSchema, confirm })
  .refine(samePassword, sameMessage);

export const acceptInvitationBody = z
  .object({
    token,
    name: z
      .string({ error: 'Enter your name.' })
      .trim()
      .min(2, 'Enter your name (at least 2 characters).')
      .max(120, 'The name may have at most 120 characters.'),
    password: passwordSchema,
    confirm,
  })
  .refine(samePassword, sameMessage);
