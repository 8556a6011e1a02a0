// A calibration version for an event campaign (reduction/formats.ts eventCalibrationSchema, an optional extension of
// FORMATS §2): the analyst leaves the detector centre and the momentum per pixel blank, enters only t₀, and the
// stored version holds the spectrometer values alone; the list describes it as a calibration for event files.
import { expect, test } from '@playwright/test';
import { DEMO, signIn } from './helpers/auth';

test('an analyst saves a calibration for event files with no detector-image fields', async ({ page }) => {
  test.setTimeout(120_000);
  await signIn(page, DEMO.analyst);
  const res = await page.request.get('/api/campaigns');
  const campaigns = (await res.json()) as { campaigns?: { id: number; name: string }[] };
  const campaign = (campaigns.campaigns ?? []).find((c) => c.name === 'He 800 nm elliptical');
  expect(campaign, 'the seeded helium campaign').toBeDefined();
  await page.goto(`/campaigns/${campaign!.id}/calibration`);
  await page.getByRole('button', { name: 'New version' }).first().click();
  const editor = page.getByTestId('calibration-editor');
  await expect(editor.getByTestId('event-calibration-hint')).toBeVisible();
  await editor.getByLabel('Centre x₀').fill('');
  await editor.getByLabel('Centre y₀').fill('');
  await editor.getByLabel('Momentum per pixel').fill('');
  await editor.getByLabel('Time offset t₀').fill('14.7');
  await page.screenshot({ path: '.data/test-reports/event-only-calibration-editor.png', fullPage: true });
  await editor.getByRole('button', { name: 'Save as new version' }).click();
  await expect(editor).toHaveCount(0);
  const list = await page.request.get(`/api/campaigns/${campaign!.id}/calibrations`);
  expect(list.ok()).toBe(true);
  const versions = ((await list.json()) as { versions?: { body: Record<string, unknown> }[] }).versions ?? [];
  const saved = versions.find((v) => JSON.stringify(v.body.spectrometer) === '{"t0":14.7}');
  expect(saved, JSON.stringify(versions.map((v) => v.body))).toBeDefined();
  expect(saved!.body.center_px).toBeUndefined();
  expect(saved!.body.momentum_per_pixel_au).toBeUndefined();
  await page.reload();
  await expect(page.getByText('for event files only: t₀ 14.7 ns').first()).toBeVisible();
  await page.screenshot({ path: '.data/test-reports/event-only-calibration-list.png', fullPage: true });
});
