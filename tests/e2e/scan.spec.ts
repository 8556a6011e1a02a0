// From upload to result in the browser (C5, C6): as the demo operator, drop a generated scan file on a shift page
// and send it; the worker reduces it; the scan page shows the offset. The file's truth comes from the project's
// forward model (`npm run make-example`, FILE.truth.json). To compare with that truth the scan is reduced once more
// with the generator's own calibration (FILE.calibration.json), saved by the demo analyst as a draft version — any
// version of the campaign may reduce a scan — so the campaign's approved pair is left as it is. Tolerance per step:
// 3 σ of the bootstrap plus 0.3° (binning and smoothing; our choice). Then a two-colour scan shows its phase maps.
import { execFileSync } from 'node:child_process';
import { mkdtempSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { type APIRequestContext, type Browser, expect, type Page, test } from '@playwright/test';

const PASSWORD = 'lobeline-demo';

function makeExample(out: string, args: string[]): string {
  execFileSync('npx', ['tsx', 'scripts/make-example.ts', '--out', out, ...args], { stdio: 'ignore' });
  return out;
}

async function signIn(page: Page, email: string) {
  await page.goto('/sign-in');
  await page.getByLabel('E-mail address').fill(email);
  await page.getByLabel('Password').fill(PASSWORD);
  await page.getByRole('button', { name: /sign in/i }).click();
  await page.waitForURL((u) => !u.pathname.startsWith('/sign-in'));
}

async function asUser(browser: Browser, email: string) {
  const context = await browser.newContext();
  const page = await context.newPage();
  await signIn(page, email);
  return { context, page, request: page.request };
}

/**
 * The seeded campaign of that name (scripts/seed.ts gives it approved calibration and settings versions). Found by
 * name, not position: other specs (auth.spec.ts) create campaigns without approved versions in the same database.
 */
async function seededCampaignId(request: APIRequestContext, name = 'He 800 nm elliptical'): Promise<number> {
  const res = await request.get('/api/campaigns');
  expect(res.ok()).toBeTruthy();
  const body = (await res.json()) as { campaigns?: { id: number; name: string }[] };
  const id = (body.campaigns ?? []).find((c) => c.name === name)?.id;
  expect(id, `seeded campaign "${name}"`).toBeDefined();
  return id as number;
}

/** Drops files on a new shift of the campaign and waits until every one is stored. */
async function uploadOnNewShift(page: Page, campaignId: number, files: string[]): Promise<number> {
  const opened = await page.request.post('/api/shifts', { data: { campaignId, title: `Scan view e2e ${Date.now()}` } });
  expect(opened.ok()).toBeTruthy();
  const body = (await opened.json()) as { shift?: { id: number }; id?: number };
  const shiftId = (body.shift?.id ?? body.id) as number;
  await page.goto(`/shifts/${shiftId}`);
  // Files set before React has hydrated the drop zone are not seen by it: wait until the page has settled.
  await page.waitForLoadState('networkidle');
  await page.getByTestId('dropzone-input').setInputFiles(files);
  // A file of another kind than the campaign's (the two-colour file in the helium campaign) waits for the
  // operator's confirmation (tests/e2e/everyday.spec.ts): confirm it, as the operator would.
  for (const f of files) {
    const item = page.locator(`[data-testid=drop-item][data-file="${path.basename(f)}"]`);
    await expect(item.getByTestId('precheck-summary')).toBeVisible({ timeout: 60_000 });
    const confirm = item.getByTestId('confirm-attention');
    if (await confirm.count()) await confirm.check();
  }
  await page.getByTestId('send-all').click();
  for (const f of files) {
    await expect(page.locator(`[data-testid=drop-item][data-file="${path.basename(f)}"]`)).toHaveAttribute(
      'data-phase',
      'done',
      {
        timeout: 90_000,
      },
    );
  }
  return shiftId;
}

async function scanIdByFile(request: APIRequestContext, campaignId: number, name: string): Promise<number> {
  const res = await request.get(`/api/campaigns/${campaignId}/scans?q=${encodeURIComponent(name)}&pageSize=5`);
  expect(res.ok()).toBeTruthy();
  const body = (await res.json()) as { rows: { id: number; fileName: string }[] };
  const row = body.rows.find((r) => r.fileName === name);
  expect(row, `scan of ${name}`).toBeDefined();
  return (row as { id: number }).id;
}

test('an uploaded scan is reduced and its offsets agree with the generator truth', async ({ page, browser }) => {
  test.setTimeout(300_000);
  const dir = mkdtempSync(path.join(tmpdir(), 'lobeline-scan-e2e-'));
  const name = `scan-e2e-${Date.now()}.h5`;
  const file = makeExample(path.join(dir, name), [
    '--kind',
    'angular_streaking',
    '--steps',
    '3',
    '--size',
    '512', // the demo detector (seed calibration v1 is centred on a 512-pixel frame)
    '--offset-deg',
    '7',
    '--seed',
    String(Date.now() % 1e6),
  ]);
  const truth = JSON.parse(readFileSync(file.replace(/\.h5$/, '.truth.json'), 'utf8')) as {
    steps: { index: number; offset_deg: number }[];
  };
  const calibration = JSON.parse(readFileSync(file.replace(/\.h5$/, '.calibration.json'), 'utf8')) as unknown;

  await signIn(page, 'operator@harbor-point.example');
  const campaignId = await seededCampaignId(page.request);
  await uploadOnNewShift(page, campaignId, [file]);
  const uploadedAt = Date.now();
  const scanId = await scanIdByFile(page.request, campaignId, name);

  // The automatic reduction with the campaign's approved versions.
  await page.goto(`/scans/${scanId}`);
  await expect(page.getByTestId('scan-status')).toHaveAttribute('data-status', 'reduced', { timeout: 120_000 });
  await expect(page.getByTestId('headline-offset')).toContainText('±');
  test.info().annotations.push({ type: 'upload-to-result-ms', description: String(Date.now() - uploadedAt) });

  // The same scan with the generator's calibration (a draft version saved by the analyst).
  const analyst = await asUser(browser, 'analyst@harbor-point.example');
  const created = await analyst.request.post(`/api/campaigns/${campaignId}/calibrations`, {
    data: { body: calibration, note: `generator calibration for ${name}` },
  });
  expect(created.ok(), await created.text()).toBeTruthy();
  const version = ((await created.json()) as { version: { id: number; version: number } }).version;
  const reduce = await analyst.request.post(`/api/scans/${scanId}/reduce`, { data: { calibrationId: version.id } });
  expect(reduce.ok(), await reduce.text()).toBeTruthy();
  await analyst.context.close();

  await page.reload();
  await expect(page.getByTestId('result-panel')).toContainText(`calibration v${version.version}`, { timeout: 120_000 });
  for (const t of truth.steps) {
    const cell = page.getByTestId(`step-offset-${t.index}`);
    await expect(cell).toContainText('±');
    const [value, err] = ((await cell.textContent()) ?? '').split('±').map((s) => Number.parseFloat(s));
    expect(Number.isFinite(value) && Number.isFinite(err)).toBe(true);
    expect(
      Math.abs((value as number) - t.offset_deg),
      `step ${t.index}: shown ${value} ± ${err}, true ${t.offset_deg}`,
    ).toBeLessThanOrEqual(3 * (err as number) + 0.3);
  }
  await expect(page.getByTestId('momentum-image').locator('canvas')).toBeVisible();
  await expect(page.getByTestId('angular-plot')).toBeVisible();
});

test('a two-colour phase scan shows its phase maps and a drawn region’s yield against the phase', async ({ page }) => {
  test.setTimeout(300_000);
  const dir = mkdtempSync(path.join(tmpdir(), 'lobeline-phase-e2e-'));
  const name = `phase-e2e-${Date.now()}.h5`;
  const file = makeExample(path.join(dir, name), [
    '--kind',
    'two_color_phase',
    '--steps',
    '12',
    '--size',
    '512', // the demo detector (seed calibration v1 is centred on a 512-pixel frame)
    '--seed',
    '5',
  ]);
  await signIn(page, 'operator@harbor-point.example');
  const campaignId = await seededCampaignId(page.request);
  await uploadOnNewShift(page, campaignId, [file]);
  const scanId = await scanIdByFile(page.request, campaignId, name);
  await page.goto(`/scans/${scanId}`);
  await expect(page.getByTestId('scan-status')).toHaveAttribute('data-status', 'reduced', { timeout: 120_000 });
  const panel = page.getByTestId('phase-panel');
  await expect(panel).toBeVisible();
  await expect(panel.getByTestId('phase-map-phase_of_max').locator('canvas')).toBeVisible();
  await panel.getByRole('button', { name: 'Contrast A₁/A₀' }).click();
  await expect(panel.getByTestId('phase-map-contrast')).toBeVisible();
  // draw a region on the map and get its curve
  await panel.getByRole('button', { name: 'Draw a region' }).click();
  const svg = panel.getByTestId('phase-map-contrast').locator('svg').first();
  const box = await svg.boundingBox();
  expect(box).not.toBeNull();
  const b = box as { x: number; y: number; width: number; height: number };
  await page.mouse.move(b.x + b.width * 0.55, b.y + b.height * 0.3);
  await page.mouse.down();
  await page.mouse.move(b.x + b.width * 0.8, b.y + b.height * 0.6, { steps: 5 });
  await page.mouse.up();
  await expect(panel.getByTestId('yield-vs-phase')).toContainText('region 1', { timeout: 30_000 });
});
