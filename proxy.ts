// Next 16 request proxy. Three jobs, all cheap and without database access:
//   1. a Content-Security-Policy with a fresh nonce for every page (Next reads the nonce from the request's CSP
//      header and puts it on its own scripts; a nonce makes every page render per request);
//   2. the sign-in page's return address (`next`, or next-auth's `callbackUrl`) must be a path of the app's own
//      origin (lib/auth/redirect.ts): a foreign one is dropped, a malformed one, like a malformed percent-encoded
//      path, answers 400 (RFC 9110 §15.5.1) instead of failing later;
//   3. an optimistic gate: a page request without a session token is sent to /sign-in. The real checks happen on
//      the server in every page and route handler (lib/auth/actor.ts + lib/policy.ts), which also see
//      deactivations, role changes and ended sessions that a token cannot.
// The other security headers (nosniff, Referrer-Policy, Permissions-Policy, COOP, X-Frame-Options, the API's CSP)
// come from next.config.mjs for every answer.
import { type NextRequest, NextResponse } from 'next/server';
import { getToken } from 'next-auth/jwt';
import { checkRedirectTarget } from '@/lib/auth/redirect';

// '/data': the public landing pages of campaigns (C10); whether one may be shown is lib/policy.ts's 'landing.read'.
const PUBLIC_PREFIXES = ['/sign-in', '/invite', '/reset-password', '/data'];

export function isPublicPath(pathname: string): boolean {
  return PUBLIC_PREFIXES.some((p) => pathname === p || pathname.startsWith(`${p}/`));
}

/** Where the browser may send uploads: the S3 endpoint of the environment, or AWS S3 when none is set. */
function s3Sources(): string {
  const endpoint = process.env.S3_ENDPOINT?.trim();
  if (endpoint) {
    try {
      return new URL(endpoint).origin;
    } catch {
      return '';
    }
  }
  return 'https://*.amazonaws.com';
}

/**
 * The page policy (CSP Level 3). Scripts: only those carrying this request's nonce and what they load
 * ('strict-dynamic'); WebAssembly compilation for h5wasm ('wasm-unsafe-eval'); in development also 'unsafe-eval',
 * which Next's dev runtime needs. Styles allow inline style attributes (React and the plots set them).
 */
export function contentSecurityPolicy(nonce: string, dev = process.env.NODE_ENV === 'development'): string {
  const connect = ["'self'", s3Sources()].filter(Boolean).join(' ');
  return [
    "default-src 'self'",
    `script-src 'self' 'nonce-${nonce}' 'strict-dynamic' 'wasm-unsafe-eval'${dev ? " 'unsafe-eval'" : ''}`,
    "style-src 'self' 'unsafe-inline'",
    "img-src 'self' blob: data:",
    "font-src 'self'",
    `connect-src ${connect}`,
    "worker-src 'self' blob:",
    "object-src 'none'",
    "base-uri 'self'",
    "form-action 'self'",
    "frame-ancestors 'none'",
  ].join('; ');
}

function badRequest(sentence: string): NextResponse {
  return new NextResponse(`${sentence}\n`, {
    status: 400,
    headers: {
      'content-type': 'text/plain; charset=utf-8',
      'cache-control': 'no-store',
      'x-content-type-options': 'nosniff',
      'content-security-policy': "default-src 'none'; frame-ancestors 'none'",
    },
  });
}

function appOrigin(request: NextRequest): string {
  return process.env.APP_ORIGIN?.trim() || request.nextUrl.origin;
}

export async function proxy(request: NextRequest): Promise<NextResponse> {
  const { pathname, search } = request.nextUrl;
  try {
    decodeURIComponent(pathname);
  } catch {
    return badRequest('This address is not valid: it contains a broken percent-encoded character.');
  }

  if (pathname === '/sign-in') {
    const sp = request.nextUrl.searchParams;
    let dropped = false;
    const url = request.nextUrl.clone();
    for (const key of ['next', 'callbackUrl']) {
      const raw = sp.get(key);
      if (raw === null) continue;
      const r = checkRedirectTarget(raw, appOrigin(request));
      if (!r.ok && r.reason === 'malformed') {
        return badRequest(`This sign-in address is not valid: its "${key}" part is not a readable address.`);
      }
      if (!r.ok) {
        url.searchParams.delete(key);
        dropped = true;
      }
    }
    // A return address of another site is dropped, not followed (OWASP ASVS 4.0 V5.1.5).
    if (dropped) return withSecurityHeaders(NextResponse.redirect(url), null);
  }

  if (!isPublicPath(pathname)) {
    const token = await getToken({ req: request, secret: process.env.NEXTAUTH_SECRET }).catch(() => null);
    if (!token || typeof token.userId !== 'number') {
      const url = request.nextUrl.clone();
      url.pathname = '/sign-in';
      url.search = '';
      const next = `${pathname}${search}`;
      if (next !== '/') url.searchParams.set('next', next);
      return withSecurityHeaders(NextResponse.redirect(url), null);
    }
  }

  const nonce = Buffer.from(crypto.getRandomValues(new Uint8Array(18))).toString('base64');
  const csp = contentSecurityPolicy(nonce);
  const requestHeaders = new Headers(request.headers);
  requestHeaders.set('x-nonce', nonce);
  // The address, for app/(app)/forbidden.tsx (the 403 boundary says why without the page's help).
  requestHeaders.set('x-lobeline-path', pathname);
  requestHeaders.set('content-security-policy', csp);
  return withSecurityHeaders(NextResponse.next({ request: { headers: requestHeaders } }), csp);
}

function withSecurityHeaders(response: NextResponse, csp: string | null): NextResponse {
  response.headers.set('content-security-policy', csp ?? "default-src 'none'; frame-ancestors 'none'");
  return response;
}

export const config = {
  // Not: the API (route handlers answer 401 themselves, /api/ping and /api/auth must stay open), Next's assets,
  // fonts and files with an extension (favicon, robots.txt, images). Prefetches still get a nonce (they render).
  matcher: ['/((?!api/|_next/static|_next/image|favicon.ico|fonts/|.*\\.[A-Za-z0-9]+$).*)'],
};
