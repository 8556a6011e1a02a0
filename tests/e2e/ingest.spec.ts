// End of shift in the browser (C2): as the demo operator, drop a generated scan file and a broken one on the shift
// page, send both, watch the progress reach 100 %, see one accepted and one quarantined with its reason, close the
// shift and read the receipt from the SMTP catcher (JSON files in MAIL_CATCHER_DIR).
import { execFileSync } from 'node:child_process';
import { createHash } from 'node:crypto';
import { mkdtempSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { expect, test } from '@playwright/test';
import { waitForCaughtMessage } from '@/lib/mail/catcher-store';

const OPERATOR = 'operator@harbor-point.example';
const PASSWORD = 'lobeline-demo';
const mailDir = process.env.MAIL_CATCHER_DIR ?? '.data/test/mail';

function makeExample(out: string, extra: string[]): string {
  execFileSync(
    'npx',
    [
      'tsx',
      'scripts/make-example.ts',
      '--kind',
      'angular_streaking',
      '--out',
      out,
      '--steps',
      '3',
      '--size',
      '128',
      '--seed',
      String(Date.now() % 1e6),
      ...extra,
    ],
    { stdio: 'ignore' },
  );
  return out;
}

test('operator drops, sends and closes a shift, and gets the receipt', async ({ page }) => {
  test.setTimeout(180_000);
  const dir = mkdtempSync(path.join(tmpdir(), 'lobeline-e2e-'));
  const good = makeExample(path.join(dir, 'e2e-good.h5'), []);
  const broken = makeExample(path.join(dir, 'e2e-no-wavelength.h5'), ['--broken', 'missing_wavelength']);
  const goodSha = createHash('sha256').update(readFileSync(good)).digest('hex');

  await page.goto('/sign-in');
  await page.getByLabel('E-mail address').fill(OPERATOR);
  await page.getByLabel('Password').fill(PASSWORD);
  await page.getByRole('button', { name: /sign in/i }).click();
  await page.waitForURL((u) => !u.pathname.startsWith('/sign-in'));

  // open a new shift in the first campaign the operator can use
  const res = await page.request.get('/api/campaigns');
  expect(res.ok()).toBeTruthy();
  const campaigns = (await res.json()) as { campaigns?: { id: number; name: string }[] };
  // The seeded helium campaign: the generated files are He at 800 nm, and a file that differs from its campaign
  // now waits for the operator's confirmation (tests/e2e/everyday.spec.ts).
  const campaignId = (campaigns.campaigns ?? []).find((c) => c.name === 'He 800 nm elliptical')?.id;
  expect(campaignId).toBeDefined();
  const opened = await page.request.post('/api/shifts', { data: { campaignId, title: `E2E shift ${Date.now()}` } });
  expect(opened.ok()).toBeTruthy();
  const body = (await opened.json()) as { shift?: { id: number }; id?: number };
  const shiftId = body.shift?.id ?? body.id;

  await page.goto(`/shifts/${shiftId}`);
  await expect(page.getByTestId('safety-notice')).toBeVisible();
  await page.waitForLoadState('networkidle'); // the drop zone must be hydrated before files are set
  await page.getByTestId('dropzone-input').setInputFiles([good, broken]);
  const goodRow = page.locator('[data-testid=drop-item][data-file="e2e-good.h5"]');
  const badRow = page.locator('[data-testid=drop-item][data-file="e2e-no-wavelength.h5"]');
  await expect(goodRow.getByTestId('precheck-summary')).toContainText('800 nm');
  await expect(goodRow.getByTestId('frame-preview')).toBeVisible();
  await expect(badRow.getByTestId('precheck-problems')).toContainText('/entry/instrument/source/wavelength');
  await badRow.getByRole('checkbox').check();
  await page.getByTestId('send-all').click();

  await expect(goodRow).toHaveAttribute('data-phase', 'done', { timeout: 60_000 });
  await expect(badRow).toHaveAttribute('data-phase', 'done', { timeout: 60_000 });
  await expect(goodRow.getByTestId('item-progress')).toContainText('100 %');
  await expect(page.getByTestId('batch-progress')).toContainText('100 %');
  await expect(goodRow).toContainText('Accepted');
  await expect(badRow).toContainText('Quarantined');

  const stored = page.getByTestId('stored-files');
  await expect(stored.locator('[data-status=accepted]')).toContainText('e2e-good.h5');
  await expect(stored.locator('[data-status=quarantined]').getByTestId('quarantine-reasons')).toContainText(
    'wavelength',
  );

  await page.getByTestId('close-shift-button').click();
  await page.getByTestId('confirm-close').click();
  // The receipt shows the hash shortened (first 12 + last 4 hex digits) and keeps the full value on the cell.
  const shaCell = page.getByTestId('receipt').locator(`[data-sha256="${goodSha}"]`);
  await expect(shaCell).toContainText(`${goodSha.slice(0, 12)}…${goodSha.slice(-4)}`);
  await expect(shaCell.getByTitle(goodSha)).toBeVisible();

  const mail = await waitForCaughtMessage((m) => m.to.includes(OPERATOR) && m.text.includes(goodSha), {
    dir: mailDir,
    timeoutMs: 20_000,
  });
  expect(mail.text).toContain('e2e-no-wavelength.h5');
  expect(mail.text).toContain('QUARANTINED');
  expect(mail.html).toContain('/entry/instrument/source/wavelength');
});
