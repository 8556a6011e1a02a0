// Accounts and access in the browser (C1), against the test app with the demo seed: each demo role sees what it
// may (and not what it may not), a forbidden page says so plainly, a wrong password is refused, an expired reset
// link gives a clear message, and an invitation is accepted through the link read from the SMTP catcher.
import { createHash, randomBytes } from 'node:crypto';
import { expect, type Page, test } from '@playwright/test';
import { encode } from 'next-auth/jwt';
import { getDb } from '@/lib/db';
import { waitForCaughtMessage } from '@/lib/mail/catcher-store';
import { PasswordResetToken, User } from '@/models';
import { DEMO, linkPath, MAIL_DIR, signIn, signOut } from './helpers/auth';

const nav = (page: Page) => page.getByRole('navigation', { name: 'Main' });

test.describe('what each role sees', () => {
  test('operator: can open a shift, cannot create campaigns or manage users', async ({ page }) => {
    await signIn(page, DEMO.operator);
    await expect(nav(page).getByRole('link', { name: 'Open a shift' })).toBeVisible();
    await expect(nav(page).getByRole('link', { name: 'New campaign' })).toHaveCount(0);
    await expect(nav(page).getByRole('link', { name: 'Users' })).toHaveCount(0);
    await expect(page.getByTestId('campaign-table')).toContainText('He 800 nm elliptical');
    await expect(page.getByTestId('campaign-table')).not.toContainText('Ar 800 + 400 nm phase scan');
    await expect(page.getByTestId('team-role')).toContainText(['Angular streaking group']);

    await page.goto('/admin/users');
    await expect(page.getByTestId('forbidden')).toContainText('Only administrators manage users');
    await page.goto('/campaigns/new');
    await expect(page.getByTestId('forbidden')).toContainText('Creating a campaign is for analysts and PIs');

    await page.goto('/shifts/new');
    await expect(page.getByTestId('safety-notice')).toContainText('laser-safety officer');
    await expect(page.getByTestId('shift-form')).toBeVisible();
    await signOut(page);
  });

  test('analyst: opens shifts and creates campaigns, with per-field errors', async ({ page }) => {
    await signIn(page, DEMO.analyst);
    await expect(nav(page).getByRole('link', { name: 'Open a shift' })).toBeVisible();
    await expect(nav(page).getByRole('link', { name: 'New campaign' })).toBeVisible();
    await expect(nav(page).getByRole('link', { name: 'Audit trail' })).toHaveCount(0);

    await page.goto('/campaigns/new');
    await page.getByLabel('Name').fill('x');
    await page.getByRole('button', { name: 'Create the campaign' }).click();
    const errors = page.getByTestId('campaign-form').getByTestId('field-error');
    await expect(errors).toContainText(['The name needs at least 3 characters.']);

    const name = `Kr 800 nm test ${randomBytes(3).toString('hex')}`;
    await page.getByLabel('Name').fill(name);
    await page.getByLabel('Target').fill('Kr');
    await page.getByLabel('Fundamental wavelength (nm)').fill('800');
    await page.getByRole('button', { name: 'Create the campaign' }).click();
    await page.waitForURL(/\/campaigns\/\d+$/);
    await page.goto('/');
    await expect(page.getByTestId('campaign-table')).toContainText(name);

    await page.goto('/admin/audit');
    await expect(page.getByTestId('forbidden')).toContainText('The audit trail is open to PIs');
  });

  test('PI: two teams, creates campaigns, reads the audit trail, cannot open shifts', async ({ page }) => {
    await signIn(page, DEMO.pi);
    await expect(nav(page).getByRole('link', { name: 'New campaign' })).toBeVisible();
    await expect(nav(page).getByRole('link', { name: 'Open a shift' })).toHaveCount(0);
    await expect(nav(page).getByRole('link', { name: 'Audit trail' })).toBeVisible();
    await expect(page.getByTestId('team-role')).toHaveCount(2);

    const switcher = page.getByTestId('team-switcher');
    await switcher.selectOption({ label: 'Two-colour phase group · PI' });
    await expect(page.getByTestId('campaigns-panel')).toContainText('Campaigns of Two-colour phase group');
    await expect(page.getByTestId('campaign-table')).toContainText('Ne 1300 nm bicircular');
    await expect(page.getByTestId('campaign-table')).not.toContainText('He 800 nm elliptical');

    await page.goto('/admin/audit');
    // A PI reads the events of the teams they lead (sign-ins belong to no team and are not shown here).
    await expect(page.getByText('Events of Angular streaking group and Two-colour phase group.')).toBeVisible();
    await expect(page.getByTestId('audit-table')).toBeVisible();
    await expect(page.getByTestId('audit-table').locator('[data-action^="auth.sign_"]')).toHaveCount(0);
    await expect(page.getByTestId('audit-table')).not.toContainText(/Signed in|Sign-in failed|Signed out/);
    await page.goto('/shifts/new');
    await expect(page.getByTestId('forbidden')).toContainText('Opening a shift is for operators and analysts');
  });

  test('analyst of the other team sees only that team', async ({ page }) => {
    await signIn(page, DEMO.phaseAnalyst);
    await expect(page.getByTestId('campaign-table')).toContainText('Ar 800 + 400 nm phase scan');
    await expect(page.getByTestId('campaign-table')).not.toContainText('He 800 nm elliptical');
    await expect(page.getByTestId('team-switcher').locator('option')).toHaveCount(1);
  });

  test('steward: metadata of every team and the audit trail, no shift or admin pages', async ({ page }) => {
    await signIn(page, DEMO.steward);
    await expect(page.getByTestId('campaigns-panel')).toContainText('Campaigns of every team');
    await expect(page.getByTestId('campaign-table')).toContainText('He 800 nm elliptical');
    await expect(page.getByTestId('campaign-table')).toContainText('Ne 1300 nm bicircular');
    await expect(nav(page).getByRole('link', { name: 'Open a shift' })).toHaveCount(0);
    await expect(nav(page).getByRole('link', { name: 'Audit trail' })).toBeVisible();
    await page.goto('/admin/users');
    await expect(page.getByTestId('forbidden')).toBeVisible();
  });

  test('admin: users and teams, no team data', async ({ page }) => {
    await signIn(page, DEMO.admin);
    await expect(nav(page).getByRole('link', { name: 'Users' })).toBeVisible();
    await expect(nav(page).getByRole('link', { name: 'Teams' })).toBeVisible();
    await expect(page.getByTestId('campaign-table')).toHaveCount(0);
    await page.goto('/admin/teams');
    await expect(page.getByTestId('teams-list')).toContainText('Angular streaking group');
    await page.goto('/shifts/new');
    await expect(page.getByTestId('forbidden')).toBeVisible();
  });

  test('a signed-out visitor is sent to the sign-in page', async ({ page }) => {
    await page.goto('/admin/users');
    await expect(page).toHaveURL(/\/sign-in\?next=%2Fadmin%2Fusers$/);
  });
});

test('a wrong password is refused with a plain message', async ({ page }) => {
  await page.goto('/sign-in');
  await page.getByLabel('E-mail address').fill(DEMO.analyst);
  await page.getByLabel('Password').fill('not-the-demo-password');
  await page.getByRole('button', { name: 'Sign in' }).click();
  await expect(page.getByTestId('sign-in-error')).toHaveText('The e-mail address or password is not right.');
  await expect(page).toHaveURL(/\/sign-in/);
});

test('a forged session cookie is refused and lands in the audit trail', async ({ browser, page }) => {
  // A token of the right shape, claiming the admin's power, but sealed with a secret that is not the server's.
  const forged = await encode({
    token: { userId: 1, email: DEMO.admin, facilityRoles: ['admin'] },
    secret: `not the server secret ${randomBytes(8).toString('hex')}`,
    maxAge: 3600,
  });
  const intruder = await browser.newContext();
  await intruder.addCookies([{ name: 'next-auth.session-token', value: forged, url: 'http://127.0.0.1:3100' }]);
  const me = await intruder.request.get('/api/me');
  expect(me.status()).toBe(401);
  expect(((await me.json()) as { error?: { message?: string } }).error?.message).toMatch(/sign in/i);
  const p = await intruder.newPage();
  await p.goto('/admin/users');
  await expect(p).toHaveURL(/\/sign-in/);
  await intruder.close();

  await signIn(page, DEMO.admin);
  await expect(async () => {
    const r = await page.request.get('/api/audit?action=auth.session_rejected&pageSize=5');
    expect(r.ok()).toBeTruthy();
    const body = (await r.json()) as { events: { outcome: string; details: { reason?: string; token?: string } }[] };
    const digest = createHash('sha256').update(forged).digest('hex').slice(0, 12);
    expect(body.events.find((e) => e.details?.token === `sha256:${digest}`)).toMatchObject({
      outcome: 'refused',
      details: { reason: 'invalid' },
    });
  }).toPass({ timeout: 10_000 });
});

test('an expired reset link says so', async ({ page }) => {
  await page.goto('/reset-password');
  await page.getByLabel('E-mail address').fill(DEMO.phaseAnalyst);
  await page.getByRole('button', { name: 'Send the link' }).click();
  await expect(page.getByTestId('reset-requested')).toContainText('If an active account uses this address');
  const mail = await waitForCaughtMessage((m) => m.to.includes(DEMO.phaseAnalyst) && /Reset/.test(m.subject), {
    dir: MAIL_DIR,
  });
  // Age the token in the database, as if the hour had passed.
  getDb();
  const user = await User.findOne({ where: { email: DEMO.phaseAnalyst } });
  await PasswordResetToken.update({ expires_at: new Date(Date.now() - 60_000) }, { where: { user_id: user!.id } });
  await page.goto(linkPath(mail.text, 'reset-password'));
  await expect(page.getByTestId('token-problem')).toContainText('This reset link has expired');
  await expect(page.getByRole('link', { name: 'Ask for a new link' })).toBeVisible();
});

test('an invitation is accepted through the e-mailed link', async ({ page, browser }) => {
  const email = `newcomer-${randomBytes(4).toString('hex')}@harbor-point.example`;
  await signIn(page, DEMO.admin);
  await page.goto('/admin/users');
  const form = page.getByTestId('invite-form');
  await form.getByLabel('E-mail address').fill(email);
  await form.getByLabel('Name (optional)').fill('Rin Castellano');
  await form.getByLabel('Team', { exact: true }).selectOption({ label: 'Angular streaking group' });
  await form.getByLabel('Role in the team').selectOption('operator');
  await form.getByRole('button', { name: 'Send the invitation' }).click();
  await expect(page.getByTestId('admin-notice')).toContainText(`An invitation was sent to ${email}`);

  const mail = await waitForCaughtMessage((m) => m.to.includes(email), { dir: MAIL_DIR });
  const context = await browser.newContext();
  const guest = await context.newPage();
  await guest.goto(linkPath(mail.text, 'invite'));
  await expect(guest.getByTestId('invitation-role')).toContainText('operator in Angular streaking group');
  await guest.getByLabel('New password').fill('ten chars or more please');
  await guest.getByLabel('Repeat the password').fill('ten chars or more please');
  await guest.getByRole('button', { name: 'Activate my account' }).click();
  await expect(guest.getByTestId('sign-in-notice')).toContainText('Your account is ready');
  await signIn(guest, email, 'ten chars or more please');
  await expect(guest.getByTestId('team-role')).toContainText(['Angular streaking group']);

  // The same link does not work twice.
  await guest.goto(linkPath(mail.text, 'invite'));
  await expect(guest.getByTestId('token-problem')).toContainText('already been accepted');
  await context.close();
});
