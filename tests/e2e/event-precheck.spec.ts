// The browser pre-check of an event file (FORMATS §1.1): the shift page's worker opens it with the same event reader
// as the server and shows the event count, the steps, the events per step and the file's spectrometer values, and a
// preview of the first events histogrammed on the default momentum grid. The file comes from the project's generator
// (reduction/synth/event-file.ts), Ar at 800 nm like the seeded argon campaign.
import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { expect, test } from '@playwright/test';
import { loadH5wasmNode } from '@/reduction/hdf5/node';
import { writeSynthEventScan } from '@/reduction/synth/event-file';
import { planScan } from '@/reduction/synth/model';

const OPERATOR = 'operator@harbor-point.example';
const PASSWORD = 'lobeline-demo';

test('pre-check of an event file shows events, steps and spectrometer values', async ({ page }) => {
  test.setTimeout(120_000);
  const file = path.join(mkdtempSync(path.join(tmpdir(), 'lobeline-e2e-events-')), 'remi-argon-3steps.h5');
  const plan = planScan({ kind: 'angular_streaking', target: 'Ar', steps: 3, size: 96, counts: 4e4, seed: 77 });
  const truth = writeSynthEventScan(await loadH5wasmNode(), file, plan, { dtype: 'float32' });
  const total = truth.events_per_step.reduce((a, b) => a + b, 0);

  await page.goto('/sign-in');
  await page.getByLabel('E-mail address').fill(OPERATOR);
  await page.getByLabel('Password').fill(PASSWORD);
  await page.getByRole('button', { name: /sign in/i }).click();
  await page.waitForURL((u) => !u.pathname.startsWith('/sign-in'));
  const res = await page.request.get('/api/campaigns');
  const campaigns = (await res.json()) as { campaigns?: { id: number; name: string }[] };
  const campaignId = (campaigns.campaigns ?? []).find((c) => c.name === 'Ar 800 nm elliptical')?.id;
  expect(campaignId, 'the seeded argon campaign').toBeDefined();
  const opened = await page.request.post('/api/shifts', { data: { campaignId, title: `Events ${Date.now()}` } });
  expect(opened.ok()).toBeTruthy();
  const body = (await opened.json()) as { shift?: { id: number }; id?: number };
  await page.goto(`/shifts/${body.shift?.id ?? body.id}`);
  await page.waitForLoadState('networkidle');
  await page.getByTestId('dropzone-input').setInputFiles([file]);

  const item = page.locator('[data-testid=drop-item][data-file="remi-argon-3steps.h5"]');
  const summary = item.getByTestId('precheck-summary');
  await expect(summary).toContainText('Events', { timeout: 60_000 });
  await expect(item.getByTestId('precheck-events')).toContainText('float32');
  await expect(summary).toContainText('3 × intensity');
  const spec = item.getByTestId('precheck-spectrometer');
  await expect(spec).toContainText('L 0.1 m');
  await expect(spec).toContainText('E 2000 V/m');
  await expect(spec).toContainText('t₀ 14.2 ns');
  await expect(spec).toContainText('B 0.001 T');
  await expect(item.getByTestId('precheck-problems')).toHaveCount(0);
  // the exact event count of the generator's truth, written out in full
  const digits = (await item.getByTestId('precheck-events').textContent())?.replace(/\D+\(float32\)$/, '') ?? '';
  expect(Number(digits.replace(/\D/g, ''))).toBe(total);
  await expect(spec).toContainText(
    truth.events_per_step.map((n) => String(n).replace(/\B(?=(\d{3})+(?!\d))/g, '\u2009')).join(', '),
  );
  await page.screenshot({ path: '.data/test-reports/event-precheck.png', fullPage: true });
});
