// Next 16 request proxy: an optimistic gate only. A request for a page without a session token is sent to
// /sign-in; everything else passes. The real checks happen on the server in every page and route handler
// (lib/auth/actor.ts + lib/policy.ts), which also see deactivations and role changes that a token cannot.
import { type NextRequest, NextResponse } from 'next/server';
import { getToken } from 'next-auth/jwt';

const PUBLIC_PREFIXES = ['/sign-in', '/invite', '/reset-password'];

export function isPublicPath(pathname: string): boolean {
  return PUBLIC_PREFIXES.some((p) => pathname === p || pathname.startsWith(`${p}/`));
}

export async function proxy(request: NextRequest): Promise<NextResponse> {
  const { pathname, search } = request.nextUrl;
  if (isPublicPath(pathname)) return NextResponse.next();
  const token = await getToken({ req: request, secret: process.env.NEXTAUTH_SECRET }).catch(() => null);
  if (token && typeof token.userId === 'number') {
    // The address, for app/(app)/forbidden.tsx (a 403 boundary says why without the page's help).
    const headers = new Headers(request.headers);
    headers.set('x-lobeline-path', pathname);
    return NextResponse.next({ request: { headers } });
  }
  const url = request.nextUrl.clone();
  url.pathname = '/sign-in';
  url.search = '';
  const next = `${pathname}${search}`;
  if (next !== '/') url.searchParams.set('next', next);
  return NextResponse.redirect(url);
}

export const config = {
  // Not: the API (route handlers answer 401 themselves, /api/ping and /api/auth must stay open), Next's assets,
  // fonts and files with an extension (favicon, robots.txt, images).
  matcher: ['/((?!api/|_next/static|_next/image|favicon.ico|fonts/|.*\\.[A-Za-z0-9]+$).*)'],
};
