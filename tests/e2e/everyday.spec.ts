// Everyday use as the demo analyst and PI: a quarantined file released with the correction the form suggests is
// reduced with it (and says so); its result file downloads as a valid HDF5 file (format signature \x89HDF\r\n\x1a\n,
// HDF5 File Format Specification) whose summary is the API's result JSON; the drop panel names a file of another
// target, a file dropped twice and one already stored, and waits for a confirmation per file; a result of a draft
// calibration is listed as a trial result, apart from the scan's result; approving first lists what it changes.
// Files come from the project's generator (`npm run make-example`); the campaign is the seeded "He 800 nm
// elliptical" (scripts/seed.ts, calibration v1 for the 512-pixel demo detector).
import { execFileSync } from 'node:child_process';
import { copyFileSync, mkdtempSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { type APIRequestContext, expect, type Page, test } from '@playwright/test';
import { loadH5wasmNode } from '@/reduction/hdf5/node';
import { DEMO, signIn } from './helpers/auth';

const SHOTS = '.data/test/shots';
const dir = mkdtempSync(path.join(tmpdir(), 'lobeline-everyday-e2e-'));
const seed = () => String(100_000 + (Date.now() % 800_000));

function makeExample(name: string, args: string[]): string {
  const out = path.join(dir, name);
  execFileSync(
    'npx',
    [
      'tsx',
      'scripts/make-example.ts',
      '--out',
      out,
      '--kind',
      'angular_streaking',
      '--steps',
      '2',
      '--size',
      '512',
      '--seed',
      seed(),
      ...args,
    ],
    {
      stdio: 'ignore',
    },
  );
  return out;
}

async function heCampaign(request: APIRequestContext): Promise<number> {
  const body = (await (await request.get('/api/campaigns')).json()) as { campaigns: { id: number; name: string }[] };
  const id = body.campaigns.find((c) => c.name === 'He 800 nm elliptical')?.id;
  expect(id, 'the seeded helium campaign').toBeDefined();
  return id as number;
}

async function newShift(page: Page, campaignId: number, title: string): Promise<number> {
  const opened = await page.request.post('/api/shifts', { data: { campaignId, title: `${title} ${Date.now()}` } });
  expect(opened.ok(), await opened.text()).toBeTruthy();
  const body = (await opened.json()) as { shift?: { id: number }; id?: number };
  const shiftId = (body.shift?.id ?? body.id) as number;
  await page.goto(`/shifts/${shiftId}`);
  await page.waitForLoadState('networkidle');
  return shiftId;
}

const row = (page: Page, file: string) => page.locator(`[data-testid=drop-item][data-file="${path.basename(file)}"]`);

test('a released correction reaches the result, and the result file downloads as HDF5', async ({ page }) => {
  test.setTimeout(240_000);
  const broken = makeExample(`everyday-no-wavelength-${Date.now()}.h5`, ['--broken', 'missing_wavelength']);
  await signIn(page, DEMO.analyst);
  await newShift(page, await heCampaign(page.request), 'Release e2e');
  await page.getByTestId('dropzone-input').setInputFiles([broken]);
  await expect(row(page, broken).getByTestId('precheck-problems')).toContainText('wavelength');
  await row(page, broken).getByRole('checkbox').check();
  await page.getByTestId('send-all').click();
  await expect(row(page, broken)).toContainText('Quarantined', { timeout: 60_000 });

  const stored = page.locator(`[data-testid=stored-file][data-file="${path.basename(broken)}"]`);
  await stored.getByRole('button', { name: 'Release…' }).click();
  const form = stored.getByTestId('release-form');
  const wavelength = form.getByLabel('Wavelength (nm)');
  // the form offers the field the reason names, filled with the campaign's wavelength
  await expect(wavelength).toHaveValue('800');
  await wavelength.fill('eight hundred');
  await form.getByRole('button', { name: 'Release the file' }).click();
  await expect(form.getByTestId('field-error')).toHaveText(/^Wavelength \(nm\): write a number/);
  await wavelength.fill('800');
  await page.screenshot({ path: `${SHOTS}/release-form.png`, fullPage: true });
  await form.getByRole('button', { name: 'Release the file' }).click();
  await expect(stored).toHaveAttribute('data-status', 'released');

  await stored.getByRole('link', { name: path.basename(broken) }).click();
  await expect(page.getByTestId('scan-status')).toHaveAttribute('data-status', 'reduced', { timeout: 120_000 });
  await expect(page.getByTestId('result-overrides')).toHaveText('Corrected at release: Wavelength 800 nm');
  const scanId = Number(new URL(page.url()).pathname.split('/').pop());

  const downloading = page.waitForEvent('download');
  await page.getByRole('link', { name: 'Result file (HDF5, NeXus)' }).click();
  const download = await downloading;
  const saved = path.join(dir, 'downloaded.h5');
  await download.saveAs(saved);
  const bytes = new Uint8Array(readFileSync(saved));
  expect(Array.from(bytes.slice(0, 8))).toEqual([0x89, 0x48, 0x44, 0x46, 0x0d, 0x0a, 0x1a, 0x0a]);
  expect(download.suggestedFilename()).toMatch(/^lobeline-scan-\d+-cal-v\d+-set-v\d+\.h5$/);
  const rt = await loadH5wasmNode();
  const f = new rt.File(saved, 'r');
  let summary: unknown;
  try {
    summary = JSON.parse(String((f.get('entry/result/summary') as { value: unknown }).value));
  } finally {
    f.close();
  }
  const api = (await (await page.request.get(`/api/scans/${scanId}/result`)).json()) as { result: unknown };
  expect(summary).toEqual(api.result);
  expect((summary as { input: { overrides?: unknown } }).input.overrides).toEqual({ wavelength_nm: 800 });
});

test('the drop panel names another target, a file dropped twice and a stored one, and asks per file', async ({
  page,
}) => {
  test.setTimeout(180_000);
  const argon = makeExample(`everyday-argon-${Date.now()}.h5`, ['--target', 'Ar']);
  const helium = makeExample(`everyday-helium-${Date.now()}.h5`, []);
  const again = path.join(dir, `copy-of-${path.basename(helium)}`);
  copyFileSync(helium, again);
  await signIn(page, DEMO.analyst);
  const campaignId = await heCampaign(page.request);
  await newShift(page, campaignId, 'Pre-check e2e');
  await page.getByTestId('dropzone-input').setInputFiles([argon, helium, again]);
  await expect(row(page, argon).getByTestId('precheck-attention')).toContainText(
    "The file's target is Ar, but the campaign “He 800 nm elliptical” is on He.",
  );
  await expect(row(page, again).getByTestId('precheck-attention')).toContainText('dropped twice', { timeout: 30_000 });
  await expect(row(page, helium).getByTestId('precheck-attention')).toHaveCount(0);
  // only the helium file goes without a word
  await expect(page.getByTestId('send-all')).toHaveText('Send 1 file to storage');
  await expect(page.getByTestId('unconfirmed-count')).toHaveText('2 waiting for your confirmation');
  await page.screenshot({ path: `${SHOTS}/precheck-attention.png`, fullPage: true });
  await row(page, argon).getByTestId('confirm-attention').check();
  await expect(page.getByTestId('send-all')).toHaveText('Send 2 files to storage');
  await page.getByTestId('send-all').click();
  await expect(row(page, helium)).toHaveAttribute('data-phase', 'done', { timeout: 90_000 });
  await expect(row(page, argon)).toHaveAttribute('data-phase', 'done', { timeout: 90_000 });
  await expect(row(page, again)).toHaveAttribute('data-phase', 'ready');

  // The helium file is now stored: dropped again in a new shift, the panel says so before sending.
  await newShift(page, campaignId, 'Pre-check again e2e');
  await page.getByTestId('dropzone-input').setInputFiles([helium]);
  await expect(row(page, helium).getByTestId('precheck-attention')).toContainText(
    /Identical \(same SHA-256\) to “everyday-helium-\d+\.h5”, already scan \d+ of this campaign/,
    { timeout: 30_000 },
  );
  await expect(page.getByTestId('send-all')).toHaveText('Nothing left to send');
});

test('a draft calibration’s result is a trial result; approving lists what changes first', async ({ browser }) => {
  test.setTimeout(240_000);
  const file = makeExample(`everyday-trial-${Date.now()}.h5`, []);
  const analyst = await (await browser.newContext()).newPage();
  await signIn(analyst, DEMO.analyst);
  const campaignId = await heCampaign(analyst.request);
  await newShift(analyst, campaignId, 'Trial e2e');
  await analyst.getByTestId('dropzone-input').setInputFiles([file]);
  await analyst.getByTestId('send-all').click();
  await expect(row(analyst, file)).toHaveAttribute('data-phase', 'done', { timeout: 90_000 });
  const list = (await (
    await analyst.request.get(`/api/campaigns/${campaignId}/scans?q=${encodeURIComponent(path.basename(file))}`)
  ).json()) as { rows: { id: number }[] };
  const id = list.rows[0]?.id;
  expect(id).toBeDefined();
  await analyst.goto(`/scans/${id}`);
  await expect(analyst.getByTestId('scan-status')).toHaveAttribute('data-status', 'reduced', { timeout: 120_000 });
  const headline = await analyst.getByTestId('headline-offset').textContent();

  // a draft with the generator's own calibration, used for one more reduction of this scan
  const calibration = JSON.parse(readFileSync(file.replace(/\.h5$/, '.calibration.json'), 'utf8')) as unknown;
  const created = await analyst.request.post(`/api/campaigns/${campaignId}/calibrations`, {
    data: { body: calibration, note: 'e2e trial draft' },
  });
  expect(created.ok(), await created.text()).toBeTruthy();
  const draft = ((await created.json()) as { version: { id: number; version: number } }).version;
  const reduce = await analyst.request.post(`/api/scans/${id}/reduce`, { data: { calibrationId: draft.id } });
  expect(reduce.ok(), await reduce.text()).toBeTruthy();
  // wait for the second result through the API, then load the page afresh
  await expect
    .poll(
      async () =>
        ((await (await analyst.request.get(`/api/scans/${id}`)).json()) as { results: unknown[] }).results.length,
      { timeout: 120_000 },
    )
    .toBe(2);
  await analyst.reload();
  const trial = analyst.getByTestId('trial-results');
  await expect(trial).toContainText(`calibration v${draft.version}`);
  await expect(trial).toContainText('trial');
  await expect(analyst.getByTestId('headline-offset')).toHaveText(headline ?? '');
  await trial.getByRole('button', { name: 'Show' }).click();
  await expect(analyst.getByTestId('trial-result-banner')).toContainText('never approved');
  await analyst.screenshot({ path: `${SHOTS}/trial-result.png`, fullPage: true });

  const pi = await (await browser.newContext()).newPage();
  await signIn(pi, DEMO.pi);
  await pi.goto(`/campaigns/${campaignId}/calibration`);
  await pi.getByRole('button', { name: `Approve v${draft.version}…` }).click();
  const confirm = pi.getByTestId('approval-confirm');
  await expect(confirm).toContainText(`Approve calibration v${draft.version}?`);
  await expect(confirm).toContainText(`to calibration v${draft.version}`);
  await expect(confirm).toContainText(/1 trial result already computed with the new pair becomes the current result/);
  await expect(confirm.getByTestId('approval-scans')).toContainText('→');
  await pi.screenshot({ path: `${SHOTS}/approval-confirm.png`, fullPage: true });
  // Cancelled: the seeded campaign keeps its approved pair for the other browser tests.
  await confirm.getByRole('button', { name: 'Cancel' }).click();
  await expect(confirm).toHaveCount(0);
});
