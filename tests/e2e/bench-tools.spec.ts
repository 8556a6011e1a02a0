// The bench's scale, background and rotation tools (issue 15, SCIENCE.md §7.1, §7.3, §7.4) as an analyst meets them.
// Two generated scans (tests/e2e/helpers/make-bench-scan.ts, the project's forward model): one with ATI rings at a
// known κ = 2×10⁻³ eV/px² and a background frame at shot ratio 1000/500 = 2, one two-lobe angular-streaking image
// (ε = 0.3, no offset: lobes on one axis at a known lab angle) as the rotation reference; both on the distorted detector (rotation 4°). The campaign's calibration starts with the
// scale 15 % off and no rotation. The analyst looks for rings, keeps the ATI rings, fits r² against n and uses the
// scale (within 3 stated σ of the generator's); marks three corner regions, fits the background scale (within 3σ of
// the shot ratio) and uses it; picks the reference scan, fits the rotation (4° within 3σ + 0.2°, our allowance) and
// uses it. The scale's allowance adds the ring-radius estimator's measured bias bound (see the check). Tolerances beyond the tools' own errors are ours and stated.
import { execFileSync } from 'node:child_process';
import { mkdtempSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { type APIRequestContext, type Browser, expect, type Page, test } from '@playwright/test';
import { DEMO, signIn } from './helpers/auth';

const SHOTS = process.env.BENCH_SCREENSHOTS ?? '.data/test/bench-screenshots';

function makeScan(out: string, args: string[]): string {
  execFileSync('npx', ['tsx', 'tests/e2e/helpers/make-bench-scan.ts', '--out', out, ...args], { stdio: 'ignore' });
  return out;
}

async function asUser(browser: Browser, email: string) {
  const context = await browser.newContext({ viewport: { width: 1500, height: 1100 } });
  const page = await context.newPage();
  await signIn(page, email);
  return { context, page, request: page.request };
}

async function ok(res: Awaited<ReturnType<APIRequestContext['post']>>) {
  expect(res.ok(), await res.text()).toBeTruthy();
  return res.json();
}

/** Drops the files on a new shift of the campaign and waits until every one is stored. */
async function upload(page: Page, campaignId: number, files: string[]) {
  const opened = (await ok(
    await page.request.post('/api/shifts', { data: { campaignId, title: `Bench tools e2e ${Date.now()}` } }),
  )) as { shift?: { id: number }; id?: number };
  const shiftId = (opened.shift?.id ?? opened.id) as number;
  await page.goto(`/shifts/${shiftId}`);
  await page.waitForLoadState('networkidle');
  await page.getByTestId('dropzone-input').setInputFiles(files);
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
      { timeout: 90_000 },
    );
  }
}

async function campaignScans(request: APIRequestContext, campaignId: number) {
  const res = await request.get(`/api/campaigns/${campaignId}/scans?pageSize=50&sort=id&dir=asc`);
  expect(res.ok()).toBeTruthy();
  return ((await res.json()) as { rows: { id: number; status: string; fileName: string | null }[] }).rows;
}

/** "1.2345 ± 0.0012 unit" → [1.2345, 0.0012] (the page writes minus signs as −). */
async function valueAndError(page: Page, testId: string): Promise<[number, number]> {
  // formatNumber writes small numbers as 3.1×10⁻⁶: back to 3.1e-6
  const sup: Record<string, string> = { '⁻': '-', '⁰': '0', '¹': '1', '²': '2', '³': '3', '⁴': '4' };
  Object.assign(sup, { '⁵': '5', '⁶': '6', '⁷': '7', '⁸': '8', '⁹': '9' });
  const text = ((await page.getByTestId(testId).textContent()) ?? '')
    .replaceAll('−', '-')
    .replace(/×10([⁻⁰¹²³⁴⁵⁶⁷⁸⁹]+)/g, (_, e: string) => `e${[...e].map((c) => sup[c]).join('')}`);
  const m = text.match(/(-?[\d.]+(?:e-?\d+)?)\s*(?:°)?\s*±\s*([\d.]+(?:e-?\d+)?)/i);
  expect(m, `value ± error in "${text}"`).not.toBeNull();
  return [Number(m![1]), Number(m![2])];
}

/** Drags a rectangle on the raw-frame canvas between two fractions of its size. */
async function drag(page: Page, from: [number, number], to: [number, number]) {
  await page.getByTestId('bench-detector').scrollIntoViewIfNeeded();
  const box = (await page.getByTestId('bench-detector').boundingBox())!;
  await page.mouse.move(box.x + from[0] * box.width, box.y + from[1] * box.height);
  await page.mouse.down();
  await page.mouse.move(box.x + ((from[0] + to[0]) / 2) * box.width, box.y + ((from[1] + to[1]) / 2) * box.height);
  await page.mouse.move(box.x + to[0] * box.width, box.y + to[1] * box.height);
  await page.mouse.up();
}

test('analyst fits the momentum scale from ATI rings, the background scale and the rotation, and uses each', async ({
  browser,
}) => {
  test.setTimeout(420_000);
  const dir = mkdtempSync(path.join(tmpdir(), 'lobeline-bench-tools-e2e-'));
  const stamp = Date.now();
  // Fixed seeds: the same Poisson draw on every run, so the 3σ checks below cannot fail by chance on one run.
  const seed = '4242';
  const atiFile = makeScan(path.join(dir, `rings-${stamp}.h5`), [
    '--ati',
    '--background',
    'per_step',
    '--distort',
    '--seed',
    seed,
  ]);
  const refFile = makeScan(path.join(dir, `reference-${stamp}.h5`), [
    '--kind',
    'angular_streaking',
    '--ellipticity',
    '0.3',
    '--offset-deg',
    '0',
    '--distort',
    '--seed',
    String(Number(seed) + 1),
  ]);
  const truthCal = JSON.parse(readFileSync(atiFile.replace(/\.h5$/, '.calibration.json'), 'utf8')) as {
    momentum_per_pixel_au: number;
    rotation_deg: number;
  };
  const plan = JSON.parse(readFileSync(atiFile.replace(/\.h5$/, '.plan.json'), 'utf8')) as {
    atiRings: { radiiPx: number[]; kappaEvPerPx2: number };
  };
  const refLobes = (
    JSON.parse(readFileSync(refFile.replace(/\.h5$/, '.plan.json'), 'utf8')) as { lobeAnglesDeg: number[] }
  ).lobeAnglesDeg;
  const wrong = { ...truthCal, momentum_per_pixel_au: truthCal.momentum_per_pixel_au * 1.15, rotation_deg: 0 };

  const analyst = await asUser(browser, DEMO.analyst);
  const campaign = (await ok(
    await analyst.request.post('/api/campaigns', {
      data: { name: `Bench tools e2e ${stamp}`, target: 'He', wavelengthNm: 800, experimentKind: 'image' },
    }),
  )) as { campaign?: { id: number }; id?: number };
  const campaignId = (campaign.campaign?.id ?? campaign.id) as number;
  const cal1 = (await ok(
    await analyst.request.post(`/api/campaigns/${campaignId}/calibrations`, {
      data: { body: wrong, note: 'scale 15 % off, no rotation' },
    }),
  )) as { version: { id: number } };
  const set1 = (await ok(
    await analyst.request.post(`/api/campaigns/${campaignId}/settings`, {
      data: { body: { bootstrap: { resamples: 20, seed: 7 } }, note: 'bench tools e2e' },
    }),
  )) as { version: { id: number } };
  const pi = await asUser(browser, DEMO.pi);
  await ok(await pi.request.post(`/api/campaigns/${campaignId}/calibrations/${cal1.version.id}/approve`));
  await ok(await pi.request.post(`/api/campaigns/${campaignId}/settings/${set1.version.id}/approve`));
  for (const f of [atiFile, refFile]) await upload(analyst.page, campaignId, [f]);
  await expect.poll(async () => (await campaignScans(analyst.request, campaignId)).length, { timeout: 60_000 }).toBe(2);
  const rows = await campaignScans(analyst.request, campaignId);
  const scanId = rows.find((r) => r.fileName === path.basename(atiFile))!.id;
  const refId = rows.find((r) => r.fileName === path.basename(refFile))!.id;

  const a = analyst.page;
  await a.goto(`/scans/${scanId}/bench`);
  await expect(a.getByTestId('bench-status')).toContainText('up to date', { timeout: 60_000 });
  await expect(a.getByTestId('bench-scale-tools')).toBeVisible();

  // 1. Momentum scale from the ATI rings: suggestions, keep the five rings (the lobe's peak is not one), fit.
  await a.getByTestId('tool-ati-suggest').click();
  const boxes = a.getByTestId('tool-ati-ring');
  await expect(boxes.first()).toBeVisible({ timeout: 30_000 });
  const n = await boxes.count();
  let kept = 0;
  for (let i = 0; i < n; i++) {
    const label = (await boxes.nth(i).locator('xpath=..').textContent()) ?? '';
    const r = Number.parseFloat(label);
    const isRing = plan.atiRings.radiiPx.some((t) => Math.abs(t - r) < 1.5);
    if (isRing) kept += 1;
    if ((await boxes.nth(i).isChecked()) !== isRing) await boxes.nth(i).click();
  }
  expect(kept).toBe(5);
  await a.getByTestId('tool-ati-first-order').fill('1');
  await a.getByTestId('tool-ati-fit').click();
  await expect(a.getByTestId('tool-ati-result')).toBeVisible({ timeout: 30_000 });
  const [kappa, kappaErr] = await valueAndError(a, 'tool-ati-kappa');
  const [alpha, alphaErr] = await valueAndError(a, 'tool-ati-alpha');
  // 3 stated σ plus the ring-radius estimator's bias bound measured in tests/unit/reduction/bench (2e-3 relative
  // on κ, so 1e-3 on α = √(2κ/E_h))
  expect(Math.abs(kappa - plan.atiRings.kappaEvPerPx2)).toBeLessThan(3 * kappaErr + 2e-3 * plan.atiRings.kappaEvPerPx2);
  expect(Math.abs(alpha - truthCal.momentum_per_pixel_au)).toBeLessThan(
    3 * alphaErr + 1e-3 * truthCal.momentum_per_pixel_au,
  );
  await expect(a.getByTestId('tool-ati-residuals').locator('tr')).toHaveCount(5);
  await a.getByTestId('tool-ati').screenshot({ path: `${SHOTS}/bench-tools-ati.png` });
  await a.getByTestId('tool-ati-accept').click();
  await expect
    .poll(async () => Math.abs(Number(await a.getByTestId('scale').inputValue()) / alpha - 1), { timeout: 10_000 })
    .toBeLessThan(1e-4);

  // 2. Background scale from two corner regions.
  await a.getByTestId('tool-background-mark').click();
  // three corners ≥ 85 px from the centre and ≥ 90° from the lobe at 40° (the fourth corner holds the lobe's
  // direction); the rings end at 64 px, the lobe's peak at 74 px
  await drag(a, [0.02, 0.02], [0.2, 0.2]);
  await drag(a, [0.8, 0.8], [0.98, 0.98]);
  await drag(a, [0.02, 0.8], [0.2, 0.98]);
  await expect(a.getByTestId('tool-background-regions')).toContainText('3 regions');
  await a.getByTestId('tool-background-fit').click();
  await expect(a.getByTestId('tool-background-result')).toBeVisible({ timeout: 30_000 });
  const [k, kErr] = await valueAndError(a, 'tool-background-k');
  expect(Math.abs(k - 2)).toBeLessThan(3 * kErr);
  await expect(a.getByTestId('tool-background-warnings')).toHaveCount(0);
  await a.screenshot({ path: `${SHOTS}/bench-tools-background.png`, fullPage: true });
  await a.getByTestId('tool-background-accept').click();
  await expect(a.getByTestId('bench-controls')).toContainText('fitted factor');
  await a.getByTestId('tool-background-clear').click();
  await expect(a.getByTestId('tool-background-regions')).toContainText('0 regions');

  // 3. Rotation from the reference scan.
  await a.getByTestId('tool-rotation-scan').selectOption(String(refId));
  await expect(a.getByTestId('tool-rotation-lab-axis')).toBeEnabled({ timeout: 30_000 });
  // the lab axis of the reference's lobes (the generator's truth; for linear light, the polarization direction)
  await a.getByTestId('tool-rotation-lab-axis').fill(String(refLobes[0]));
  await a.getByTestId('tool-rotation-fit').click();
  await expect(a.getByTestId('tool-rotation-result')).toBeVisible({ timeout: 30_000 });
  const [rot, rotErr] = await valueAndError(a, 'tool-rotation-angle');
  expect(Math.abs(rot - truthCal.rotation_deg)).toBeLessThan(3 * rotErr + 0.2);
  await a.getByTestId('tool-rotation').screenshot({ path: `${SHOTS}/bench-tools-rotation.png` });
  await a.getByTestId('tool-rotation-accept').click();
  await expect
    .poll(async () => Math.abs(Number(await a.getByTestId('rotation').inputValue()) - rot), { timeout: 10_000 })
    .toBeLessThan(1e-3);
  await expect(a.getByTestId('bench-status')).toContainText('up to date', { timeout: 30_000 });
  await a.screenshot({ path: `${SHOTS}/bench-tools-done.png`, fullPage: true });

  // 4. Residuals of the centre finder and the circle fit, on the reference (angular streaking: inversion symmetry).
  await a.goto(`/scans/${refId}/bench`);
  await expect(a.getByTestId('bench-status')).toContainText('up to date', { timeout: 60_000 });
  await a.getByTestId('tool-centre').click();
  await expect(a.getByTestId('tool-centre-result')).toContainText('inversion symmetry', { timeout: 60_000 });
  await expect(a.getByTestId('tool-centre-residual')).toBeVisible();
  await a.getByTestId('bench-tools').screenshot({ path: `${SHOTS}/bench-tools-centre-residual.png` });
  await a.getByTestId('tool-ring').click();
  await expect(a.getByTestId('tool-ring-residual')).toBeVisible({ timeout: 60_000 });
  await a.getByTestId('bench-tools').screenshot({ path: `${SHOTS}/bench-tools-ring-residual.png` });
  console.log(
    `bench tools e2e: κ ${kappa} ± ${kappaErr} eV/px², α ${alpha} ± ${alphaErr} a.u./px (truth ${truthCal.momentum_per_pixel_au}), k ${k} ± ${kErr} (shot ratio 2), rotation ${rot} ± ${rotErr}° (truth ${truthCal.rotation_deg})`,
  );
  await analyst.context.close();
  await pi.context.close();
});
