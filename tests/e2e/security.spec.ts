// Web security through the running app (issue 12, points 2, 4, 5, 11), in Debian's Chromium. Sources: the CSP
// Level 3 recommendation (a violation fires `securitypolicyviolation` and a console error), OWASP ASVS 4.0 level 2
// V14.4 (headers), V5.1.5 (redirects), V2.2 (throttling), RFC 9110 §15.5.1 (400), the WHATWG URL standard — all
// from memory.
import { execFileSync } from 'node:child_process';
import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { expect, type Page, test } from '@playwright/test';
import { Op } from 'sequelize';
import { getDb } from '@/lib/db';
import { AuditEvent } from '@/models';
import { DEMO, signIn } from './helpers/auth';

/** Collects CSP violations (the DOM event) and console errors of every page the browser context opens. */
async function watchCsp(page: Page): Promise<{ violations: string[]; consoleErrors: string[] }> {
  const seen = { violations: [] as string[], consoleErrors: [] as string[] };
  await page.exposeFunction('__lobelineCspViolation', (text: string) => seen.violations.push(text));
  await page.addInitScript(() => {
    document.addEventListener('securitypolicyviolation', (e) => {
      (window as unknown as { __lobelineCspViolation: (t: string) => void }).__lobelineCspViolation(
        `${e.violatedDirective} blocked ${e.blockedURI || 'inline'} on ${location.pathname} (${e.sourceFile}:${e.lineNumber}:${e.columnNumber} ${e.sample})`,
      );
    });
  });
  page.on('console', (m) => {
    if (m.type() === 'error') seen.consoleErrors.push(m.text());
  });
  return seen;
}

const cspErrors = (errors: string[]) => errors.filter((t) => /Content Security Policy|Refused to/i.test(t));

test('pages load under the CSP with no violation: sign-in, home, account, a shift with a drop, a scan', async ({
  page,
}) => {
  test.setTimeout(180_000);
  const seen = await watchCsp(page);

  const signInPage = await page.goto('/sign-in');
  const csp = signInPage?.headers()['content-security-policy'] ?? '';
  expect(csp).toMatch(/script-src 'self' 'nonce-[A-Za-z0-9+/=]+' 'strict-dynamic' 'wasm-unsafe-eval'/);
  expect(csp).toContain("frame-ancestors 'none'");
  expect(signInPage?.headers()['x-content-type-options']).toBe('nosniff');
  expect(signInPage?.headers()['referrer-policy']).toBe('same-origin');
  expect(signInPage?.headers()['x-frame-options']).toBe('DENY');
  expect(signInPage?.headers()['cross-origin-opener-policy']).toBe('same-origin');
  expect(signInPage?.headers()['permissions-policy']).toContain('camera=()');

  await signIn(page, DEMO.operator);
  await page.goto('/account');
  await expect(page.getByTestId('change-password-form')).toBeVisible();

  // A shift with a drop: the pre-check worker runs h5wasm (WebAssembly) and the parts go straight to S3.
  // a campaign whose target and wavelength the generated file matches, so the pre-check asks for no confirmation
  const campaigns = (await (await page.request.get('/api/campaigns')).json()) as {
    campaigns: { id: number; experimentKind: string; target: string; wavelengthNm: number }[];
  };
  const campaign = campaigns.campaigns.find((c) => c.experimentKind === 'angular_streaking');
  expect(campaign, 'an angular-streaking campaign').toBeDefined();
  const campaignId = campaign!.id;
  const opened = await page.request.post('/api/shifts', { data: { campaignId, title: `CSP walk ${Date.now()}` } });
  expect(opened.ok(), await opened.text()).toBeTruthy();
  const shiftBody = (await opened.json()) as { shift?: { id: number }; id?: number };
  const shiftId = (shiftBody.shift?.id ?? shiftBody.id) as number;
  const dir = mkdtempSync(path.join(tmpdir(), 'lobeline-csp-'));
  const name = `csp-walk-${Date.now()}.h5`;
  const file = path.join(dir, name);
  execFileSync(
    'npx',
    [
      'tsx',
      'scripts/make-example.ts',
      '--kind',
      'angular_streaking',
      '--target',
      campaign!.target,
      '--wavelength',
      String(campaign!.wavelengthNm),
      '--out',
      file,
      '--steps',
      '2',
      '--size',
      '64',
    ],
    { stdio: 'ignore' },
  );
  await page.goto(`/shifts/${shiftId}`);
  await page.waitForLoadState('networkidle');
  await page.getByTestId('dropzone-input').setInputFiles([file]);
  await page.getByTestId('send-all').click();
  await expect(page.locator(`[data-testid=drop-item][data-file="${name}"]`)).toHaveAttribute('data-phase', 'done', {
    timeout: 90_000,
  });

  const list = await page.request.get(`/api/campaigns/${campaignId}/scans?q=${encodeURIComponent(name)}&pageSize=5`);
  const rows = ((await list.json()) as { rows: { id: number; fileName: string }[] }).rows;
  const scanId = rows.find((r) => r.fileName === name)?.id;
  expect(scanId, `scan of ${name}`).toBeDefined();
  await page.goto(`/scans/${scanId}`);
  await expect(page.getByTestId('scan-status')).toBeVisible();
  await page.goto('/');
  await page.waitForLoadState('networkidle');

  expect(seen.violations, seen.violations.join('\n')).toEqual([]);
  expect(cspErrors(seen.consoleErrors), seen.consoleErrors.join('\n')).toEqual([]);

  // The watch itself works: an inline event handler (no nonce can allow one) is refused and seen.
  await page.evaluate(() => {
    document.body.setAttribute('onclick', 'window.__notAllowed = 1');
    document.body.click();
  });
  await expect.poll(() => seen.violations.length).toBeGreaterThan(0);
  expect(seen.violations.join('\n')).toMatch(/script-src/);
  expect(await page.evaluate(() => (window as unknown as { __notAllowed?: number }).__notAllowed)).toBeUndefined();
});

test('API answers carry nosniff and a CSP that allows nothing', async ({ request }) => {
  const r = await request.get('/api/ping');
  expect(r.headers()['x-content-type-options']).toBe('nosniff');
  expect(r.headers()['content-security-policy']).toContain("default-src 'none'");
  expect(r.headers()['content-security-policy']).toContain("frame-ancestors 'none'");
  expect(r.headers()['referrer-policy']).toBe('same-origin');
});

test('malformed addresses answer 400, never 500', async ({ request }) => {
  for (const p of ['/api/scans/%E0%A4%A', '/api/scans/abc', '/scans/%E0%A4%A', '/sign-in?callbackUrl=%E0%A4%A']) {
    const r = await request.get(p, { maxRedirects: 0 });
    expect(r.status(), p).toBe(400);
  }
});

test('after signing in, a return address of another site is not followed', async ({ page }) => {
  for (const next of ['/%09/evil.example/x', '/%5Cevil.example/x', '//evil.example/x']) {
    await page.goto(`/sign-in?next=${encodeURIComponent(next)}`);
    await page.getByLabel('E-mail address').fill(DEMO.steward);
    await page.getByLabel('Password').fill('lobeline-demo');
    await page.getByRole('button', { name: 'Sign in' }).click();
    await expect(page.getByTestId('user-menu')).toBeVisible();
    expect(new URL(page.url()).origin, next).toBe(new URL(process.env.APP_ORIGIN ?? 'http://127.0.0.1:3100').origin);
    await page.context().clearCookies();
  }
});

test('the sign-in audit records the socket address, whatever x-forwarded-for the client sends', async ({
  playwright,
}) => {
  getDb();
  const email = `spoof-${Date.now()}@nowhere.example`;
  const ctx = await playwright.request.newContext({ baseURL: process.env.APP_ORIGIN ?? 'http://127.0.0.1:3100' });
  for (const forged of ['203.0.113.1', '203.0.113.2', '198.51.100.9, 203.0.113.3']) {
    const { csrfToken } = (await (await ctx.get('/api/auth/csrf')).json()) as { csrfToken: string };
    await ctx.post('/api/auth/callback/credentials', {
      form: { csrfToken, email, password: 'not a real password', json: 'true' },
      headers: { 'x-forwarded-for': forged },
      maxRedirects: 0,
    });
  }
  await ctx.dispose();
  const rows = await AuditEvent.findAll({
    where: { action: 'auth.sign_in_failed', actor_email: email, at: { [Op.gte]: new Date(Date.now() - 600_000) } },
    raw: true,
  });
  expect(rows).toHaveLength(3);
  expect(new Set(rows.map((r) => r.ip))).toEqual(new Set(['127.0.0.1']));
});
