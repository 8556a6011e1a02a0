// next-auth's own endpoints (sign-in, sign-out, session, CSRF). The configuration is lib/auth/options.ts.
// This is the one route handler not wrapped in apiRoute: next-auth parses and answers these requests itself.
import NextAuth from 'next-auth';
import { authOptions } from '@/lib/auth/options';

const handler = NextAuth(authOptions);

export { handler as GET, handler as POST };
