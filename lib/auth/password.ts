// Password hashing (bcrypt via bcryptjs) and the password rule shared by invitation and reset forms.
import { dictionary } from '@zxcvbn-ts/language-common';
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

// The rule for new passwords (OWASP ASVS 4.0 V2.1.1: at least 12 characters; V2.1.7: not a known breached or
// common password). The list of common passwords is the "passwords-common" dictionary of the npm package
// @zxcvbn-ts/language-common (MIT licence, 49 233 passwords gathered from public password leaks for the zxcvbn
// strength estimator), shipped with the app as a dependency; compared case-insensitively and ignoring surrounding
// spaces. Passwords already set are not re-checked at sign-in.
export const PASSWORD_MIN = 12;

let common: Set<string> | undefined;

function commonPasswords(): Set<string> {
  if (!common) {
    common = new Set(dictionary['passwords-common'].map((p) => p.toLowerCase()));
  }
  return common;
}

/** Whether the password is on the shipped list of common passwords. */
export function isCommonPassword(password: string): boolean {
  return commonPasswords().has(password.trim().toLowerCase());
}

export const passwordSchema = z
  .string({ error: 'Enter a password.' })
  .min(PASSWORD_MIN, `The password needs at least ${PASSWORD_MIN} characters.`)
  .max(200, 'The password may have at most 200 characters.')
  // Only said of passwords long enough, so a short one gets one sentence, not two.
  .refine((p) => p.length < PASSWORD_MIN || !isCommonPassword(p), {
    message: 'This password is on the list of passwords people use most often; choose one that is your own.',
  });

export const newPasswordSchema = z
  .object({ password: passwordSchema, confirm: z.string({ error: 'Repeat the password.' }) })
  .refine((v) => v.password === v.confirm, { path: ['confirm'], message: 'The two passwords are not the same.' });
