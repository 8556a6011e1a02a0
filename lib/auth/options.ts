// next-auth configuration: e-mail + password (Credentials provider, bcrypt), JWT sessions of 12 hours.
// The JWT carries the user id and a snapshot of the memberships taken at sign-in; the server never trusts that
// snapshot for access decisions: lib/auth/actor.ts re-reads memberships and facility roles on every call.
import type { NextAuthOptions } from 'next-auth';
import CredentialsImport from 'next-auth/providers/credentials';
import { z } from 'zod';
import { recordAudit } from '@/lib/audit';
import { bumpSessionVersion, getActorByUserId } from '@/lib/db/queries/accounts';
import { getEnv } from '@/lib/env';
import { log } from '@/lib/log';
import { checkRedirectTarget } from './redirect';
import { attemptSignIn, ipFromHeaders } from './sign-in';

// next-auth's provider modules are CommonJS with `exports.default`. Next's bundler unwraps that default; Node's own ESM
// loader (tsx scripts, benchmarks) hands over the whole module object instead, so take `.default` when it is there.
const CredentialsProvider =
  (CredentialsImport as unknown as { default?: typeof CredentialsImport }).default ?? CredentialsImport;

export const SESSION_MAX_AGE_SECONDS = 12 * 60 * 60;

const credentialsSchema = z.object({
  email: z.string().trim().min(3).max(254),
  password: z.string().min(1).max(200),
});

export const authOptions: NextAuthOptions = {
  secret: process.env.NEXTAUTH_SECRET,
  session: { strategy: 'jwt', maxAge: SESSION_MAX_AGE_SECONDS, updateAge: 60 * 60 },
  jwt: { maxAge: SESSION_MAX_AGE_SECONDS },
  pages: { signIn: '/sign-in', error: '/sign-in' },
  providers: [
    CredentialsProvider({
      id: 'credentials',
      name: 'E-mail and password',
      credentials: {
        email: { label: 'E-mail', type: 'email' },
        password: { label: 'Password', type: 'password' },
      },
      async authorize(credentials, req) {
        const parsed = credentialsSchema.safeParse(credentials ?? {});
        if (!parsed.success) return null;
        let outcome: Awaited<ReturnType<typeof attemptSignIn>>;
        try {
          outcome = await attemptSignIn({ ...parsed.data, ip: ipFromHeaders(req?.headers) });
        } catch (err) {
          log.error('sign-in check failed', { err });
          throw new Error('unavailable');
        }
        if (outcome.ok) {
          return {
            id: String(outcome.user.id),
            email: outcome.user.email,
            name: outcome.user.name,
            sessionVersion: outcome.user.sessionVersion,
          };
        }
        // next-auth passes a thrown message to the sign-in page as `error`; null becomes `CredentialsSignin`.
        if (outcome.reason === 'rate_limited' || outcome.reason === 'deactivated') throw new Error(outcome.reason);
        return null;
      },
    }),
  ],
  callbacks: {
    // next-auth's callbackUrl: only a path of the app's own origin (lib/auth/redirect.ts), else home.
    redirect({ url, baseUrl }) {
      const origin = new URL(baseUrl).origin;
      const r = checkRedirectTarget(url, origin);
      return r.ok ? `${origin}${r.path}` : origin;
    },
    async jwt({ token, user, trigger }) {
      if (user) {
        token.userId = Number(user.id);
        // Taken once, at sign-in; an update never refreshes it, so a revoked token stays revoked.
        const sv = (user as { sessionVersion?: unknown }).sessionVersion;
        token.sv = typeof sv === 'number' ? sv : 0;
      }
      if ((user || trigger === 'update') && typeof token.userId === 'number') {
        const actor = await getActorByUserId({ userId: token.userId });
        token.memberships = (actor?.memberships ?? []).map((m) => ({ teamId: m.teamId, role: m.role }));
        token.facilityRoles = actor?.facilityRoles ?? [];
      }
      return token;
    },
    async session({ session, token }) {
      session.userId = typeof token.userId === 'number' ? token.userId : undefined;
      session.sessionVersion = typeof token.sv === 'number' ? token.sv : 0;
      session.memberships = token.memberships ?? [];
      session.facilityRoles = token.facilityRoles ?? [];
      return session;
    },
  },
  events: {
    async signOut({ token }) {
      const userId = typeof token?.userId === 'number' ? token.userId : null;
      // Signing out ends every session of the account, not only this browser's (OWASP ASVS 4.0 V3.3.1).
      if (userId !== null) {
        await bumpSessionVersion({ userId }).catch((err: unknown) =>
          log.error('sign-out: ending sessions failed', { err }),
        );
      }
      await recordAudit({
        action: 'auth.sign_out',
        actorId: userId,
        actorEmail: typeof token?.email === 'string' ? token.email : null,
        targetType: 'user',
        targetId: userId,
      });
    },
  },
  logger: {
    error: (code, metadata) => log.error('next-auth error', { code, metadata }),
    warn: (code) => log.warn('next-auth warning', { code }),
    debug: () => undefined,
  },
};

/** The secret used to sign session tokens (from the checked environment). */
export function sessionSecret(): string {
  return getEnv().NEXTAUTH_SECRET;
}
