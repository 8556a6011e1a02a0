// Single-use tokens for invitations and password resets: 32 random bytes, sent once by e-mail (base64url), and
// only their SHA-256 stored (`token_hash`), so a copy of the database cannot be used to accept or reset.
import { createHash, randomBytes } from 'node:crypto';

export const INVITATION_TTL_MS = 7 * 24 * 60 * 60 * 1000;
export const RESET_TTL_MS = 60 * 60 * 1000;

export function hashToken(token: string): string {
  return createHash('sha256').update(token, 'utf8').digest('hex');
}

export function newToken(): { token: string; hash: string } {
  const token = randomBytes(32).toString('base64url');
  return { token, hash: hashToken(token) };
}

/** A token as it appears in a link: 43 base64url characters. Anything else is unknown without a lookup. */
export function looksLikeToken(value: string): boolean {
  return /^[A-Za-z0-9_-]{43}$/.test(value);
}

export type TokenState = 'valid' | 'expired' | 'used' | 'revoked' | 'unknown';

export const TOKEN_STATE_MESSAGES: Record<Exclude<TokenState, 'valid'>, { invitation: string; reset: string }> = {
  expired: {
    invitation:
      'This invitation has expired (invitations are valid for 7 days). Ask an administrator to send a new one.',
    reset: 'This reset link has expired (reset links are valid for 1 hour). Ask for a new link below.',
  },
  used: {
    invitation: 'This invitation has already been accepted. Sign in with the password you chose.',
    reset: 'This reset link has already been used. Ask for a new link if you still need one.',
  },
  revoked: {
    invitation: 'This invitation was withdrawn by an administrator.',
    reset: 'This reset link is no longer valid. Ask for a new link below.',
  },
  unknown: {
    invitation: 'This invitation link is not valid. Check that you copied the whole link from the e-mail.',
    reset: 'This reset link is not valid. Check that you copied the whole link from the e-mail, or ask for a new one.',
  },
};
