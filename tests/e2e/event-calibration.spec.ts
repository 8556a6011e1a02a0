// The calibration editor's spectrometer fields for event files (FORMATS §1.1, §2): an analyst enters t₀, the
// magnetic field and the detector centre in a new calibration version of the seeded helium campaign; the stored
// version carries exactly the values entered (blank fields write nothing), as the API returns them.
import { expect, test } from '@playwright/test';
import { DEMO, signIn } from './helpers/auth';

test('an analyst enters spectrometer values in a new calibration version', async ({ page }) => {
  test.setTimeout(120_000);
  await signIn(page, DEMO.analyst);
  const res = await page.request.get('/api/campaigns');
  const campaigns = (await res.json()) as { campaigns?: { id: number; name: string }[] };
  const campaign = (campaigns.campaigns ?? []).find((c) => c.name === 'He 800 nm elliptical');
  expect(campaign, 'the seeded helium campaign').toBeDefined();
  await page.goto(`/campaigns/${campaign!.id}/calibration`);
  await page.getByRole('button', { name: 'New version' }).first().click();
  const editor = page.getByTestId('calibration-editor');
  await expect(editor.getByText('Spectrometer, for event files only')).toBeVisible();
  await editor.getByLabel('Time offset t₀').fill('14.2');
  await editor.getByLabel('Magnetic field along the axis').fill('0.001');
  await editor.getByLabel('Detector centre x (mm)').fill('0.35');
  await editor.getByLabel('Detector centre y (mm)').fill('-0.2');
  await page.screenshot({ path: '.data/test-reports/event-calibration-editor.png', fullPage: true });
  await editor.getByRole('button', { name: 'Save as new version' }).click();
  await expect(editor).toHaveCount(0);
  const list = await page.request.get(`/api/campaigns/${campaign!.id}/calibrations`);
  expect(list.ok()).toBe(true);
  const body = JSON.stringify(await list.json());
  await page.reload();
  await expect(page.getByText('event files: B 0.001 T, t₀ 14.2 ns, centre (0.35, -0.2) mm').first()).toBeVisible();
  expect(body).toContain('"spectrometer":{"magnetic_field":0.001,"t0":14.2,"detector_center":[0.35,-0.2]}');
});
