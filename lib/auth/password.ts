// Password hashing (bcrypt via bcryptjs) and the password rule shared by invitation and reset forms.
import bcrypt from 'bcryptjs';
import { z } from 'zod';

/** bcrypt cost used for new hashes. 12 by default; tests may lower it (4–11) through LOBELINE_BCRYPT_COST. */
export function bcryptCost(): number {
  const raw = Number(process.env.LOBELINE_BCRYPT_COST);
  const isTest = process.env.NODE_ENV === 'test' || process.env.LOBELINE_INSTANCE === 'test';
  if (Number.isInteger(raw) && raw >= 4 && raw <= 15 && (raw >= 12 || isTest)) return raw;
  return 12;
}

export async function hashPassword(password: string): Promise<string> {
  return bcrypt.hash(password, bcryptCost());
}

export async function verifyPassword(password: string, hash: string): Promise<boolean> {
  try {
    return await bcrypt.compare(password, hash);
  } catch {
    return false;
  }
}

/** A valid hash of a random string, compared against when the account is unknown so both paths take as long. */
export const DUMMY_HASH = '$2b$12$09/WZQQxz0JoOv.5mNjTW.PEutXLmINosFEzvQy3JRcQ43OnMVp3y';

export const PASSWORD_MIN = 10;
export const passwordSchema = z
  .string({ error: 'Enter a password.' })
  .min(PASSWORD_MIN, `The password needs at least ${PASSWORD_MIN} characters.`)
  .max(200, 'The password may have at most 200 characters.');

export const newPasswordSchema = z
  .object({ password: passwordSchema, confirm: z.string({ error: 'Repeat the password.' }) })
  .refine((v) => v.password === v.confirm, { path: ['confirm'], message: 'The two passwords are not the same.' });
