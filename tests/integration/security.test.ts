// Web-security checks of the API wrapper and the proxy against the real services (issue 12, points 2, 3, 7, 8, 11).
// Sources, named beside each check: OWASP ASVS 4.0 level 2 requirement numbers (from memory), RFC 6454 (the
// Origin header), RFC 9110 (status codes 201, 400, 413, 415), RFC 3986 §2.1 (percent-encoding), the WHATWG URL
// standard (how a browser reads `/\evil` and tabs). Everything else is Lobeline's own rule.
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import type { RouteHandler } from '@/lib/api/route';
import type { World } from './helpers/world';

vi.mock('server-only', () => ({}));

const { NextRequest } = await import('next/server');
const { callRoute } = await import('./helpers/call');
const { actAs, clearSession } = await import('./helpers/session');
const { makeWorld } = await import('./helpers/world');
const { closeSequelize, getDb } = await import('@/lib/db');
const { getEnv } = await import('@/lib/env');
const { closeMailTransport } = await import('@/lib/mail/transport');
const { DEFAULT_MAX_BODY_BYTES } = await import('@/lib/api/route');
const { closeSignInThrottle } = await import('@/lib/auth/throttle');
const { pendingPasswordResetRequests, settlePasswordResetRequests } = await import('@/lib/auth/password-reset');
const { waitForCaughtMessage } = await import('@/lib/mail/catcher-store');
const { AuditEvent, Team } = await import('@/models');
const teamsRoute = await import('@/app/api/admin/teams/route');
const calibrationsRoute = await import('@/app/api/campaigns/[campaignId]/calibrations/route');
const scanRoute = await import('@/app/api/scans/[scanId]/route');
const resetRoute = await import('@/app/api/auth/password-reset/route');
const resetCompleteRoute = await import('@/app/api/auth/password-reset/complete/route');
const { proxy } = await import('@/proxy');
const { authOptions } = await import('@/lib/auth/options');
const { safeNextPath } = await import('@/lib/auth/redirect');

let w: World;
const ORIGIN = () => getEnv().APP_ORIGIN;

beforeAll(async () => {
  getDb();
  w = await makeWorld();
});

afterAll(async () => {
  clearSession();
  await settlePasswordResetRequests();
  closeMailTransport();
  await closeSignInThrottle();
  await closeSequelize();
});

/** A raw request to a route handler with exactly these headers (no helper adds any). */
async function send(
  handler: RouteHandler,
  init: {
    method: string;
    path: string;
    headers?: Record<string, string>;
    body?: BodyInit;
    params?: Record<string, string>;
  },
) {
  const request = new Request(`${ORIGIN()}${init.path}`, {
    method: init.method,
    headers: init.headers,
    body: init.body,
    // A stream body needs this in Node's fetch; harmless for strings.
    ...(init.body instanceof ReadableStream ? { duplex: 'half' } : {}),
  } as RequestInit);
  const response = await handler(request, { params: Promise.resolve(init.params ?? {}) });
  const text = await response.text();
  let json: { error?: { code: string; message: string; details?: string[] } } | null = null;
  try {
    json = JSON.parse(text);
  } catch {
    json = null;
  }
  return { status: response.status, json, headers: response.headers };
}

let slugCounter = 0;
/** A fresh team slug (2–64 lower-case letters, digits, hyphens). */
const slugFor = (what: string) => `${what}-${Date.now().toString(36)}-${++slugCounter}`;

const teamBody = (slug: string) => JSON.stringify({ slug, name: `Team ${slug}` });

describe('cross-site request forgery (ASVS 4.0 V4.2.2, V13.2.3)', () => {
  it('refuses a text/plain form post from another origin and stores nothing', async () => {
    actAs(w.users.admin);
    const slug = slugFor('csrf-form');
    // What an HTML <form enctype="text/plain"> on another site sends: a "simple" request (Fetch standard), with
    // the Origin of the page that sent it (RFC 6454 §7).
    const r = await send(teamsRoute.POST, {
      method: 'POST',
      path: '/api/admin/teams',
      headers: {
        'content-type': 'text/plain',
        origin: 'https://evil.example',
        'sec-fetch-site': 'cross-site',
        'x-forwarded-for': '192.0.2.77',
      },
      body: teamBody(slug),
    });
    expect(r.status).toBe(403);
    expect(r.json?.error?.message).toMatch(/did not come from a Lobeline page/);
    expect(await Team.count({ where: { slug } })).toBe(0);
    const [row] = await AuditEvent.findAll({
      where: { action: 'auth.access_refused', ip: '192.0.2.77' },
      order: [['id', 'DESC']],
      limit: 1,
      raw: true,
    });
    expect(row?.details).toMatchObject({ path: '/api/admin/teams', code: 'forbidden:api' });
  });

  it('judges by Origin, else Sec-Fetch-Site, else the Referer origin; "null" is refused', async () => {
    actAs(w.users.admin);
    const cases: [Record<string, string>, number][] = [
      [{ origin: 'https://evil.example' }, 403],
      [{ origin: 'null' }, 403],
      // Same host, other port: another origin (RFC 6454 §4: scheme, host and port).
      [{ origin: ORIGIN().replace(/:(\d+)$/, (_, p) => `:${Number(p) + 1}`) }, 403],
      [{ 'sec-fetch-site': 'same-site' }, 403],
      [{ 'sec-fetch-site': 'cross-site' }, 403],
      [{ referer: 'https://evil.example/page' }, 403],
    ];
    for (const [headers, status] of cases) {
      const slug = slugFor('csrf-h');
      const r = await send(teamsRoute.POST, {
        method: 'POST',
        path: '/api/admin/teams',
        headers: { 'content-type': 'application/json', ...headers },
        body: teamBody(slug),
      });
      expect(r.status, JSON.stringify(headers)).toBe(status);
      expect(await Team.count({ where: { slug } })).toBe(0);
    }
    // The app's own pages pass, by each of the three headers.
    const own: Record<string, string>[] = [
      { origin: ORIGIN() },
      { 'sec-fetch-site': 'same-origin' },
      { referer: `${ORIGIN()}/admin/teams` },
    ];
    for (const headers of own) {
      const slug = slugFor('csrf-ok');
      const r = await send(teamsRoute.POST, {
        method: 'POST',
        path: '/api/admin/teams',
        headers: { 'content-type': 'application/json', ...headers },
        body: teamBody(slug),
      });
      expect(r.status, JSON.stringify(headers)).toBe(201);
      expect(await Team.count({ where: { slug } })).toBe(1);
    }
  });

  it('accepts a body only as application/json, even from the same origin (RFC 9110 §15.5.16: 415)', async () => {
    actAs(w.users.admin);
    for (const type of ['text/plain', 'application/x-www-form-urlencoded', 'multipart/form-data; boundary=x']) {
      const slug = slugFor('ctype');
      const r = await send(teamsRoute.POST, {
        method: 'POST',
        path: '/api/admin/teams',
        headers: { 'content-type': type, origin: ORIGIN() },
        body: teamBody(slug),
      });
      expect(r.status, type).toBe(415);
      expect(r.json?.error?.message).toMatch(/application\/json/);
      expect(await Team.count({ where: { slug } })).toBe(0);
    }
  });
});

describe('request body limits (ASVS 4.0 V13.1.3; RFC 9110 §15.5.14: 413)', () => {
  it('answers 413 with a sentence past the default limit, by Content-Length and while streaming', async () => {
    actAs(w.users.admin);
    const big = JSON.stringify({ slug: 'too-big', name: 'x'.repeat(DEFAULT_MAX_BODY_BYTES), description: null });
    const declared = await send(teamsRoute.POST, {
      method: 'POST',
      path: '/api/admin/teams',
      headers: { 'content-type': 'application/json', 'content-length': String(Buffer.byteLength(big)) },
      body: big,
    });
    expect(declared.status).toBe(413);
    expect(declared.json?.error?.message).toMatch(/larger than this address accepts \(at most 64 KiB\)/);
    // Without a Content-Length (chunked): counted while reading.
    const bytes = new TextEncoder().encode(big);
    const stream = new ReadableStream<Uint8Array>({
      start(c) {
        for (let i = 0; i < bytes.length; i += 8192) c.enqueue(bytes.subarray(i, i + 8192));
        c.close();
      },
    });
    const streamed = await send(teamsRoute.POST, {
      method: 'POST',
      path: '/api/admin/teams',
      headers: { 'content-type': 'application/json' },
      body: stream,
    });
    expect(streamed.status).toBe(413);
    expect(await Team.count({ where: { slug: 'too-big' } })).toBe(0);
  });

  it('bounds a calibration (bad-pixel list) at 1 MiB and answers 201 for a new version (RFC 9110 §15.3.2)', async () => {
    actAs(w.users.analyst);
    const params = { campaignId: String(w.campaignA) };
    const base = w.versionBody('calibration') as Record<string, unknown>;
    // 200 000 [x, y] pairs ≈ 2.4 MB of JSON: over the limit.
    const many = Array.from({ length: 200_000 }, (_, i) => [i % 1024, Math.floor(i / 1024)]);
    const tooMany = await callRoute(calibrationsRoute.POST, {
      method: 'POST',
      path: `/api/campaigns/${w.campaignA}/calibrations`,
      params,
      body: { body: { ...base, bad_pixels: many }, note: 'too many bad pixels' },
    });
    expect(tooMany.status).toBe(413);
    expect((tooMany.json as { error: { message: string } }).error.message).toMatch(/at most 1024 KiB/);
    // 5 000 pairs (≈ 60 kB, above the 64 KiB default of other routes is not needed to show the route's own limit).
    const some = Array.from({ length: 5_000 }, (_, i) => [i % 512, Math.floor(i / 512)]);
    const ok = await callRoute(calibrationsRoute.POST, {
      method: 'POST',
      path: `/api/campaigns/${w.campaignA}/calibrations`,
      params,
      body: { body: { ...base, bad_pixels: some }, note: 'a list within the limit' },
    });
    expect(ok.status, JSON.stringify(ok.json).slice(0, 300)).toBe(201);
  });
});

describe('malformed addresses answer 400 (RFC 9110 §15.5.1)', () => {
  it('a scan id that is not a number', async () => {
    actAs(w.users.analyst);
    for (const scanId of ['abc', '%E0%A4%A', '1.5', '-3']) {
      const r = await callRoute(scanRoute.GET, { method: 'GET', path: `/api/scans/${scanId}`, params: { scanId } });
      expect(r.status, scanId).toBe(400);
    }
  });

  it('a page path with broken percent-encoding (RFC 3986 §2.1), at the proxy', async () => {
    const r = await proxy(new NextRequest(`${ORIGIN()}/scans/%E0%A4%A`));
    expect(r.status).toBe(400);
    expect(await r.text()).toMatch(/broken percent-encoded character/);
  });
});

describe('the return address after signing in (ASVS 4.0 V5.1.5; WHATWG URL)', () => {
  const signIn = (query: string) => proxy(new NextRequest(`${ORIGIN()}/sign-in?${query}`));

  it('drops a return address that a browser would read as another site', async () => {
    for (const next of [
      '/%5Cevil.example/x',
      '/%09/evil.example',
      '//evil.example',
      '/\\evil.example',
      'https://evil.example/',
    ]) {
      for (const key of ['next', 'callbackUrl']) {
        const r = await signIn(`${key}=${encodeURIComponent(next)}`);
        expect(r.status, `${key}=${next}`).toBe(307);
        const location = new URL(r.headers.get('location') ?? '');
        expect(location.pathname).toBe('/sign-in');
        expect(location.searchParams.has(key), `${key}=${next}`).toBe(false);
      }
    }
  });

  it("next-auth's redirects stay on the origin and keep their own sign-in notices", async () => {
    const redirect = authOptions.callbacks?.redirect as (a: { url: string; baseUrl: string }) => Promise<string>;
    const base = ORIGIN();
    expect(await redirect({ url: `${base}/sign-in?signedOut=1`, baseUrl: base })).toBe(`${base}/sign-in?signedOut=1`);
    expect(await redirect({ url: '/scans/7', baseUrl: base })).toBe(`${base}/scans/7`);
    for (const url of ['https://evil.example/', '/\\evil.example', '//evil.example', '/%09/evil.example']) {
      expect(await redirect({ url, baseUrl: base }), url).toBe(base);
    }
    // The sign-in form itself never returns to the sign-in page (it would loop).
    expect(safeNextPath('/sign-in?next=/x', base)).toBe('/');
    expect(safeNextPath('/scans/7?tab=phase#top', base)).toBe('/scans/7?tab=phase#top');
  });

  it('keeps a path of the app and answers 400 for a malformed one', async () => {
    const kept = await signIn(`next=${encodeURIComponent('/scans/12?tab=phase')}`);
    expect(kept.headers.get('x-middleware-next')).toBe('1');
    for (const raw of ['%E0%A4%A', encodeURIComponent('http://[::1')]) {
      const bad = await signIn(`callbackUrl=${raw}`);
      expect(bad.status, raw).toBe(400);
      expect(await bad.text()).toMatch(/not a readable address/);
    }
  });
});

describe('security headers of pages (ASVS 4.0 V14.4.3, V14.4.7)', () => {
  it('gives every page a CSP with a fresh nonce, frame-ancestors none, wasm and the S3 endpoint', async () => {
    const a = await proxy(new NextRequest(`${ORIGIN()}/sign-in`));
    const b = await proxy(new NextRequest(`${ORIGIN()}/sign-in`));
    const csp = a.headers.get('content-security-policy') ?? '';
    const nonce = csp.match(/'nonce-([A-Za-z0-9+/=]+)'/)?.[1];
    expect(nonce && nonce.length >= 16).toBe(true);
    expect(b.headers.get('content-security-policy')).not.toContain(nonce);
    expect(csp).toContain("frame-ancestors 'none'");
    expect(csp).toContain("'wasm-unsafe-eval'");
    expect(csp).toContain("object-src 'none'");
    expect(csp).not.toContain("'unsafe-inline' 'nonce");
    const s3 = getEnv().S3_ENDPOINT;
    if (s3)
      expect(csp).toMatch(new RegExp(`connect-src [^;]*${new URL(s3).origin.replace(/[.*+?^${}()|[\]\\]/g, '\\$&')}`));
    // Next reads the nonce from the request's CSP header (x-middleware-request-* carries it to the renderer).
    expect(a.headers.get('x-middleware-request-x-nonce')).toBe(nonce);
  });
});

describe('passwords (ASVS 4.0 V2.1.1, V2.1.7) and the reset request (V2.5.x timing)', () => {
  it('refuses fewer than 12 characters and a common password, with a plain sentence each', async () => {
    const token = 'B'.repeat(43);
    const eleven = 'abcdefghijk';
    const short = await callRoute(resetCompleteRoute.POST, {
      method: 'POST',
      path: '/api/auth/password-reset/complete',
      body: { token, password: eleven, confirm: eleven },
    });
    expect(short.status).toBe(400);
    expect((short.json as { error: { details: string[] } }).error.details).toEqual([
      'password: The password needs at least 12 characters.',
    ]);
    // On the shipped list (@zxcvbn-ts/language-common "passwords-common"), whatever the letter case.
    for (const common of ['password1234', 'QWERTYUIOP12', '123456789012']) {
      const r = await callRoute(resetCompleteRoute.POST, {
        method: 'POST',
        path: '/api/auth/password-reset/complete',
        body: { token, password: common, confirm: common },
      });
      expect(r.status, common).toBe(400);
      expect((r.json as { error: { details: string[] } }).error.details?.[0]).toMatch(/most often/);
    }
    // Twelve characters of one's own pass the rule (the token is unknown: 404, not 400).
    const own = 'harbor tide 7';
    const r = await callRoute(resetCompleteRoute.POST, {
      method: 'POST',
      path: '/api/auth/password-reset/complete',
      body: { token, password: own, confirm: own },
    });
    expect(r.status).toBe(404);
  });

  it('answers a reset request before looking the account up, for known and unknown addresses alike', async () => {
    actAs(null);
    await settlePasswordResetRequests();
    for (const email of [w.emails.operator, `nobody-${w.run}@matrix.example`]) {
      const r = await callRoute(resetRoute.POST, { method: 'POST', path: '/api/auth/password-reset', body: { email } });
      expect(r.status).toBe(202);
      // The lookup, the token and the e-mail have not even started to finish when the answer is there.
      expect(pendingPasswordResetRequests()).toBe(1);
      await settlePasswordResetRequests();
      expect(pendingPasswordResetRequests()).toBe(0);
    }
    const mail = await waitForCaughtMessage((m) => m.to.includes(w.emails.operator) && /Reset/.test(m.subject));
    expect(mail.text).toContain('/reset-password/');
    const rows = await AuditEvent.findAll({
      where: { action: 'auth.password_reset_requested', actor_email: `nobody-${w.run}@matrix.example` },
      raw: true,
    });
    expect(rows.map((r) => (r.details as { outcome: string }).outcome)).toEqual(['unknown_account']);
  });
});
