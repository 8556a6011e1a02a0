// Everyday use of the delivered screens (issue 11, points 8, 9, 10, 12 and 13), against the test app with the demo
// seed: missing and forbidden pages answer with their HTTP status inside the app's frame, role changes ask first,
// a 390 px wide phone gets a menu and no sideways scrolling, page titles name the product once, the audit trail
// can be exported for a date range, each user chooses their e-mails, and the development mailbox groups mail by
// kind of notice. Sources: RFC 9110 §15.5.4 (403) and §15.5.5 (404) for the status codes; 390 × 844 CSS px is the
// viewport of a common current phone (from memory, common practice for "small screen" checks).
import { mkdirSync } from 'node:fs';
import { expect, type Page, test } from '@playwright/test';
import { DEMO, signIn } from './helpers/auth';

const SHOTS = '.data/test/screens';
mkdirSync(SHOTS, { recursive: true });

/** The page of a demo campaign of scripts/seed.ts, as linked from the overview (other specs add campaigns). */
async function firstCampaignHref(page: Page, name = 'He 800 nm elliptical'): Promise<string> {
  await page.goto('/');
  const link = page.getByTestId('campaign-table').getByRole('link', { name, exact: true });
  await expect(link).toBeVisible();
  const href = await link.getAttribute('href');
  expect(href, 'the overview links the demo campaign').toMatch(/^\/campaigns\/\d+$/);
  return href as string;
}

/** Records of a CSV text (RFC 4180: quoted fields may hold commas, quotes and line breaks). */
function csvRecords(text: string): string[][] {
  const out: string[][] = [];
  let row: string[] = [];
  let field = '';
  let quoted = false;
  for (let i = 0; i < text.length; i++) {
    const c = text[i];
    if (quoted) {
      if (c === '"' && text[i + 1] === '"') {
        field += '"';
        i++;
      } else if (c === '"') quoted = false;
      else field += c;
    } else if (c === '"') quoted = true;
    else if (c === ',') {
      row.push(field);
      field = '';
    } else if (c === '\n') {
      row.push(field.replace(/\r$/, ''));
      out.push(row);
      row = [];
      field = '';
    } else field += c;
  }
  if (field || row.length) out.push([...row, field]);
  return out;
}

async function docWidth(page: Page): Promise<number> {
  return page.evaluate(() => Math.max(document.documentElement.scrollWidth, document.body.scrollWidth));
}

test.describe('status codes of missing and forbidden pages', () => {
  test('an unknown address and a missing scan answer 404 inside the app, with a way back', async ({ page }) => {
    await signIn(page, DEMO.analyst);
    for (const path of ['/no-such-page', '/scans/987654321', '/campaigns/987654321']) {
      const res = await page.goto(path);
      expect(res?.status(), path).toBe(404);
      await expect(page.getByTestId('not-found')).toBeVisible();
      await expect(page.getByTestId('user-menu')).toBeVisible(); // the app's own header
      await expect(page.getByTestId('not-found').getByRole('link', { name: /overview/i })).toBeVisible();
    }
  });

  test('a page the role may not use answers 403 inside the app, with a way back', async ({ page }) => {
    await signIn(page, DEMO.operator);
    const why: Record<string, string> = {
      '/admin/users': 'Only administrators manage users',
      '/admin/teams': 'Only administrators create and manage teams',
      '/admin/audit': 'The audit trail is open to PIs',
      '/campaigns/new': 'Creating a campaign is for analysts and PIs',
    };
    for (const [path, sentence] of Object.entries(why)) {
      const res = await page.goto(path);
      expect(res?.status(), path).toBe(403);
      await expect(page.getByTestId('forbidden')).toContainText(sentence); // the page's own reason
      await expect(page.getByTestId('user-menu')).toBeVisible();
      await expect(page.getByTestId('forbidden').getByRole('link', { name: /overview/i })).toBeVisible();
    }
    await page.screenshot({ path: `${SHOTS}/operator-forbidden.png`, fullPage: true });
  });
});

test('a steward sees no calibration button; the calibration page answers 403 with the reason', async ({ page }) => {
  await signIn(page, DEMO.steward);
  const href = await firstCampaignHref(page);
  await page.goto(href);
  await expect(page.getByRole('heading', { name: 'Scans by state' })).toBeVisible();
  await expect(page.getByRole('link', { name: 'Calibration & settings' })).toHaveCount(0);
  const res = await page.goto(`${href}/calibration`);
  expect(res?.status()).toBe(403);
  await expect(page.getByTestId('forbidden')).toContainText('data stewards see the campaign’s metadata');
  await expect(page.getByTestId('forbidden').getByRole('link', { name: /overview/i })).toBeVisible();
  await page.screenshot({ path: `${SHOTS}/steward-calibration-forbidden.png`, fullPage: true });
});

test('a role menu asks before a role changes (arrow keys change nothing on their own)', async ({ page }) => {
  await signIn(page, DEMO.admin);
  await page.goto('/admin/users');
  await page.getByLabel('Find an account').fill(DEMO.operator); // other specs add many accounts
  const row = page.getByTestId(`user-row-${DEMO.operator}`);
  const select = row.getByRole('combobox').first();
  await expect(select).toHaveValue('operator');
  await select.focus();
  await page.keyboard.press('ArrowDown');
  const dialog = page.getByRole('alertdialog');
  await expect(dialog).toBeVisible();
  await expect(dialog).toContainText('Ines Halvorsen');
  await page.screenshot({ path: `${SHOTS}/admin-role-confirm.png` });
  await dialog.getByRole('button', { name: 'Keep the current role' }).click();
  await expect(dialog).toHaveCount(0);
  await page.reload();
  await page.getByLabel('Find an account').fill(DEMO.operator);
  await expect(page.getByTestId(`user-row-${DEMO.operator}`).getByRole('combobox').first()).toHaveValue('operator');

  // Confirmed, the change is made; then put back.
  await page.getByTestId(`user-row-${DEMO.operator}`).getByRole('combobox').first().selectOption('analyst');
  await page
    .getByRole('alertdialog')
    .getByRole('button', { name: /^Change the role/ })
    .click();
  await expect(page.getByTestId('admin-notice')).toContainText('is now Analyst');
  await page.getByTestId(`user-row-${DEMO.operator}`).getByRole('combobox').first().selectOption('operator');
  await page
    .getByRole('alertdialog')
    .getByRole('button', { name: /^Change the role/ })
    .click();
  await expect(page.getByTestId('admin-notice')).toContainText('is now Operator');
});

test.describe('a 390 px wide screen', () => {
  test.use({ viewport: { width: 390, height: 844 } });

  test('has a menu, and no page is wider than the screen', async ({ page }) => {
    await signIn(page, DEMO.pi);
    const menu = page.getByRole('button', { name: 'Menu' });
    await expect(menu).toBeVisible();
    await menu.click();
    const small = page.getByRole('navigation', { name: 'Main' });
    await expect(small.getByRole('link', { name: 'Audit trail' })).toBeVisible();
    await page.screenshot({ path: `${SHOTS}/pi-390-menu.png` });
    await small.getByRole('link', { name: 'Audit trail' }).click();
    await page.waitForURL('**/admin/audit');
    await expect(page.getByRole('navigation', { name: 'Main' })).toHaveCount(0); // the menu closes on navigation

    const campaignHref = await firstCampaignHref(page);
    const pages: [string, string][] = [
      ['/', 'overview'],
      ['/admin/audit', 'audit'],
      [campaignHref as string, 'campaign'],
      [`${campaignHref}/calibration`, 'calibration'],
      ['/campaigns/new', 'new-campaign'],
      ['/settings/notifications', 'notifications'],
    ];
    // A scan page too, when the earlier specs of the run (scan.spec.ts) have stored one.
    await page.goto('/');
    await expect(page.locator('a[href^="/campaigns/"]:not([href="/campaigns/new"])').first()).toBeVisible();
    const allCampaigns = (
      await page.locator('a[href^="/campaigns/"]').evaluateAll((as) => as.map((a) => a.getAttribute('href') ?? ''))
    ).filter((h) => /^\/campaigns\/\d+$/.test(h));
    for (const href of allCampaigns) {
      const r = await page.request.get(`/api${href}/scans?page=1&pageSize=5`);
      const row = r.ok() ? ((await r.json()).rows ?? []).find((x: { status: string }) => x.status === 'reduced') : null;
      if (row) {
        pages.push([`/scans/${row.id}`, 'scan']);
        break;
      }
    }
    if (!pages.some(([, n]) => n === 'scan'))
      test.info().annotations.push({ type: 'note', description: 'no reduced scan in this run; scan page not checked' });
    for (const [path, name] of pages) {
      await page.goto(path);
      await expect(page.getByTestId('user-menu')).toBeVisible();
      await page.waitForLoadState('networkidle');
      await page.screenshot({ path: `${SHOTS}/pi-390-${name}.png`, fullPage: true });
      expect(await docWidth(page), `${path} is wider than the screen`).toBeLessThanOrEqual(390);
    }
  });

  test('an analyst’s campaign page fits too: its long re-reduce button wraps', async ({ page }) => {
    await signIn(page, DEMO.analyst);
    const href = await firstCampaignHref(page);
    await page.goto(href);
    await expect(page.getByRole('button', { name: /^Re-reduce all scans with/ })).toBeVisible();
    await page.waitForLoadState('networkidle');
    await page.screenshot({ path: `${SHOTS}/analyst-390-campaign.png`, fullPage: true });
    expect(await docWidth(page), `${href} is wider than the screen`).toBeLessThanOrEqual(390);
  });

  test('the admin pages fit too, their tables scroll inside their panel', async ({ page }) => {
    await signIn(page, DEMO.admin);
    for (const [path, name] of [
      ['/admin/users', 'users'],
      ['/admin/teams', 'teams'],
      ['/admin/mailbox', 'mailbox'],
    ] as const) {
      await page.goto(path);
      await page.waitForLoadState('networkidle');
      await page.screenshot({ path: `${SHOTS}/admin-390-${name}.png`, fullPage: true });
      expect(await docWidth(page), `${path} is wider than the screen`).toBeLessThanOrEqual(390);
    }
  });
});

test('page titles name the product once', async ({ page }) => {
  await signIn(page, DEMO.pi);
  const campaignHref = await firstCampaignHref(page);
  for (const path of ['/', campaignHref as string, `${campaignHref}/calibration`, '/admin/audit', '/scans/987654321']) {
    await page.goto(path);
    const title = await page.title();
    expect(title.match(/Lobeline/g)?.length ?? 0, `${path}: "${title}"`).toBe(1);
  }
});

test('the audit trail shows version numbers, not database ids', async ({ page, browser }) => {
  // An analyst saves a new draft calibration version through the API (as the calibration page does).
  const analystContext = await browser.newContext();
  const analyst = await analystContext.newPage();
  await signIn(analyst, DEMO.analyst);
  const campaignHref = await firstCampaignHref(analyst);
  const api = `/api${campaignHref}/calibrations`;
  const list = await (await analyst.request.get(api)).json();
  const made = await analyst.request.post(api, {
    data: { body: list.versions[0].body, note: 'usability check' },
    headers: { origin: new URL(analyst.url()).origin },
  });
  expect(made.status()).toBeLessThan(300);
  await analystContext.close();

  await signIn(page, DEMO.pi);
  await page.goto('/admin/audit');
  await page.getByLabel('Kind of event').selectOption('area:calibration.');
  const table = page.getByTestId('audit-table');
  await expect(table.locator('tbody tr').first()).toBeVisible();
  const text = ((await table.locator('tbody').textContent()) ?? '').replace(/\s+/g, ' ');
  expect(text).toMatch(/calibration v\d+/i);
  expect(text).not.toMatch(/#\d+/);
  await page.screenshot({ path: `${SHOTS}/pi-audit-versions.png`, fullPage: true });
});

test('the audit trail exports a date range as CSV and JSON', async ({ page }) => {
  await signIn(page, DEMO.steward);
  await page.goto('/admin/audit');
  const today = new Date().toISOString().slice(0, 10);
  await page.getByLabel('From (UTC day)').fill(today);
  await page.getByLabel('To (UTC day)').fill(today);
  const [csv] = await Promise.all([page.waitForEvent('download'), page.getByRole('link', { name: 'CSV' }).click()]);
  expect(csv.suggestedFilename()).toMatch(/^lobeline-audit-.*\.csv$/);
  const body = await (await csv.createReadStream()).toArray();
  const records = csvRecords(Buffer.concat(body).toString('utf8'));
  expect(records[0]?.join(',')).toBe('at_utc,action,who,team,campaign,object,sha256,outcome,details');
  expect(records.length).toBeGreaterThan(1);
  for (const r of records.slice(1)) expect(r[0]?.slice(0, 10), r.join(',')).toBe(today);
  const res = await page.request.get(`/api/audit/export?format=json&from=2000-01-01&to=2000-01-02`);
  expect(res.status()).toBe(200);
  expect((await res.json()).events).toEqual([]);
});

test('each user chooses which e-mails they get; invitations and resets always go', async ({ page }) => {
  await signIn(page, DEMO.analyst);
  await page.getByTestId('user-menu').click();
  await page.getByRole('menuitem', { name: 'E-mail notifications' }).click();
  await page.waitForURL('**/settings/notifications');
  const failures = page.getByLabel('Reduction failures');
  await expect(failures).toBeChecked();
  await failures.uncheck();
  await page.getByRole('button', { name: 'Save my choices' }).click();
  await expect(page.getByTestId('prefs-notice')).toContainText('saved');
  await page.reload();
  await expect(page.getByLabel('Reduction failures')).not.toBeChecked();
  await expect(page.getByLabel('Shift receipts')).toBeChecked();
  await expect(page.getByTestId('always-sent')).toContainText('Invitations');
  await page.screenshot({ path: `${SHOTS}/analyst-notifications.png`, fullPage: true });
  await page.getByLabel('Reduction failures').check();
  await page.getByRole('button', { name: 'Save my choices' }).click();
  await expect(page.getByTestId('prefs-notice')).toContainText('saved');
});

test('the development mailbox groups mail by kind of notice, with the recipient and the key facts', async ({
  page,
}) => {
  await signIn(page, DEMO.admin);
  // One notice of a known kind: a password-reset request for the steward.
  const reset = await page.request.post('/api/auth/password-reset', {
    data: { email: DEMO.steward },
    headers: { origin: new URL(page.url()).origin },
  });
  expect(reset.ok()).toBe(true);
  await page.goto('/admin/mailbox');
  const group = page.getByTestId('notice-group-password_reset');
  await expect(group).toBeVisible();
  await expect(group.getByRole('heading')).toContainText('Password resets');
  const card = group.getByTestId('notice').filter({ hasText: DEMO.steward }).first();
  await expect(card).toBeVisible();
  await card.getByRole('button', { name: /Read the full message/ }).click();
  await expect(card.getByTestId('mail-text')).toContainText('/reset-password/');
  await page.screenshot({ path: `${SHOTS}/admin-mailbox.png`, fullPage: true });
});

test('a form problem names the field as the form does and says what to enter', async ({ page }) => {
  await signIn(page, DEMO.analyst);
  const campaignHref = await firstCampaignHref(page);
  await page.goto(`${campaignHref}/calibration`);
  await page.getByRole('button', { name: 'New version' }).first().click();
  const editor = page.getByTestId('calibration-editor');
  await editor.getByLabel('Detector ellipticity ratio').fill('');
  await editor.getByRole('button', { name: 'Save as new version' }).click();
  const problems = editor.getByTestId('version-problems');
  await expect(problems).toContainText('Detector ellipticity ratio: enter a number');
  await expect(problems).not.toContainText('detector_ellipticity');
  await expect(problems).not.toContainText('NaN');
  await page.screenshot({ path: `${SHOTS}/analyst-calibration-problem.png`, fullPage: true });
});
