// The browser pre-check reads the file with the same reader as the server (reduction/hdf5/reader.ts): a file from
// another group's software whose optional fields cannot be used (tests/fixtures/h5py/opt_other_group_software.h5,
// written by h5py) shows its warnings as warnings, not as problems, and can be sent without "send anyway"; a
// saturated detector image (sat_uint16_every_pixel.h5) is warned about before sending (FORMATS §1).
import path from 'node:path';
import { expect, test } from '@playwright/test';

const OPERATOR = 'operator@harbor-point.example';
const PASSWORD = 'lobeline-demo';
const H5PY = path.resolve('tests/fixtures/h5py');

test('pre-check lists unusable optional fields and saturation as warnings', async ({ page }) => {
  test.setTimeout(120_000);
  await page.goto('/sign-in');
  await page.getByLabel('E-mail address').fill(OPERATOR);
  await page.getByLabel('Password').fill(PASSWORD);
  await page.getByRole('button', { name: /sign in/i }).click();
  await page.waitForURL((u) => !u.pathname.startsWith('/sign-in'));
  const res = await page.request.get('/api/campaigns');
  const campaigns = (await res.json()) as { campaigns?: { id: number }[]; items?: { id: number }[] };
  const campaignId = (campaigns.campaigns ?? campaigns.items ?? [])[0]?.id;
  const opened = await page.request.post('/api/shifts', { data: { campaignId, title: `Pre-check ${Date.now()}` } });
  expect(opened.ok()).toBeTruthy();
  const body = (await opened.json()) as { shift?: { id: number }; id?: number };
  await page.goto(`/shifts/${body.shift?.id ?? body.id}`);
  await page.waitForLoadState('networkidle');
  await page
    .getByTestId('dropzone-input')
    .setInputFiles([path.join(H5PY, 'opt_other_group_software.h5'), path.join(H5PY, 'sat_uint16_every_pixel.h5')]);

  const other = page.locator('[data-testid=drop-item][data-file="opt_other_group_software.h5"]');
  const warn = other.getByTestId('precheck-warnings');
  await expect(warn).toContainText('/entry/instrument/source/pulse_duration@units');
  await expect(warn).toContainText('/entry/instrument/detector/description');
  await expect(warn).toContainText('can still be sent');
  await expect(other.getByTestId('precheck-problems')).toHaveCount(0);
  await expect(other.getByRole('checkbox')).toHaveCount(0); // no "send anyway": nothing is wrong with it

  const sat = page.locator('[data-testid=drop-item][data-file="sat_uint16_every_pixel.h5"]');
  await expect(sat.getByTestId('precheck-warnings')).toContainText('The detector image is saturated');
  await page.screenshot({ path: '.data/test-reports/precheck-warnings.png', fullPage: true });
});
