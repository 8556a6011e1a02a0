// The session test hook (lib/auth/session-source.ts): route handlers called in-process learn "who is signed in"
// from here instead of a next-auth cookie. Honoured only when NODE_ENV is 'test' (vitest sets it).
//   actAs(userId)        — as if that user had a valid session (getActor still re-reads the user from MariaDB)
//   actAs(null)          — signed out
//   actWithToken(jwt)    — the raw next-auth session cookie value, decoded and verified with NEXTAUTH_SECRET
import { claimsFromSessionToken, setSessionSourceForTests } from '@/lib/auth/session-source';

export function actAs(userId: number | null): void {
  setSessionSourceForTests(async () => (userId === null ? null : { userId }));
}

export function actWithToken(token: string): void {
  setSessionSourceForTests(() => claimsFromSessionToken(token));
}

export function clearSession(): void {
  setSessionSourceForTests(null);
}
