// The calibration bench (C7) as its users meet it. A campaign of its own (so the seeded campaigns keep their
// approved versions) gets a calibration whose centre is 6 px off the generator's (scripts/make-example.ts writes
// the calibration that undoes its own detector, FILE.calibration.json) and two scans. The analyst opens a scan on
// the bench, moves the centre by hand, sees the lobe offset change on the page, runs the symmetry centre finder
// and uses its centre (within 0.5 px of the generator's; our tolerance), saves the version with a note and reads
// the what-would-change list; the PI opens the same draft from the calibration page, reads the list, approves, and
// sees the campaign re-reduced with the new version.
import { execFileSync } from 'node:child_process';
import { mkdtempSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { type APIRequestContext, type Browser, expect, type Page, test } from '@playwright/test';
import { DEMO, signIn } from './helpers/auth';

const SHOTS = process.env.BENCH_SCREENSHOTS ?? '.data/test/bench-screenshots';

function makeExample(out: string, args: string[]): string {
  execFileSync('npx', ['tsx', 'scripts/make-example.ts', '--out', out, ...args], { stdio: 'ignore' });
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
    await page.request.post('/api/shifts', { data: { campaignId, title: `Bench e2e ${Date.now()}` } }),
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
  return ((await res.json()) as { rows: { id: number; status: string; calibrationVersion: number | null }[] }).rows;
}

async function offsetOnPage(page: Page): Promise<number> {
  const text = (await page.getByTestId('bench-lobe-offset-0').textContent()) ?? '';
  return Number.parseFloat(text.replace('−', '-'));
}

test('analyst finds the centre on the bench, saves it, and the PI approves after reading what changes', async ({
  browser,
}) => {
  test.setTimeout(420_000);
  const dir = mkdtempSync(path.join(tmpdir(), 'lobeline-bench-e2e-'));
  const stamp = Date.now();
  const files = [1, 2].map((k) =>
    makeExample(path.join(dir, `bench-${stamp}-${k}.h5`), [
      '--kind',
      'angular_streaking',
      '--steps',
      '2',
      '--size',
      '256',
      '--counts',
      '80000',
      '--seed',
      String((stamp % 1e5) + k),
    ]),
  );
  const generator = JSON.parse(readFileSync(files[0]!.replace(/\.h5$/, '.calibration.json'), 'utf8')) as {
    center_px: [number, number];
  };
  const trueX = generator.center_px[0];
  const wrong = { ...generator, center_px: [trueX + 6, generator.center_px[1]] };

  // The campaign, its first (wrong-centre) calibration and settings, approved by the PI.
  const analyst = await asUser(browser, DEMO.analyst);
  const campaign = (await ok(
    await analyst.request.post('/api/campaigns', {
      data: { name: `Bench e2e ${stamp}`, target: 'He', wavelengthNm: 800, experimentKind: 'angular_streaking' },
    }),
  )) as { campaign?: { id: number }; id?: number };
  const campaignId = (campaign.campaign?.id ?? campaign.id) as number;
  const cal1 = (await ok(
    await analyst.request.post(`/api/campaigns/${campaignId}/calibrations`, {
      data: { body: wrong, note: 'first guess, centre 6 px off' },
    }),
  )) as { version: { id: number } };
  const set1 = (await ok(
    await analyst.request.post(`/api/campaigns/${campaignId}/settings`, {
      data: { body: { bootstrap: { resamples: 40, seed: 7 } }, note: 'bench e2e' },
    }),
  )) as { version: { id: number } };
  const pi = await asUser(browser, DEMO.pi);
  await ok(await pi.request.post(`/api/campaigns/${campaignId}/calibrations/${cal1.version.id}/approve`));
  await ok(await pi.request.post(`/api/campaigns/${campaignId}/settings/${set1.version.id}/approve`));

  // One file after the other: two uploads accepted in the same moment can meet a deadlock on reduction_jobs
  // (seen once here, an ingest matter outside the bench), which leaves one scan unqueued.
  for (const f of files) await upload(analyst.page, campaignId, [f]);
  await expect
    .poll(async () => (await campaignScans(analyst.request, campaignId)).map((s) => s.status).join(','), {
      timeout: 180_000,
    })
    .toBe('reduced,reduced');
  const scanId = (await campaignScans(analyst.request, campaignId))[0]!.id;

  // The analyst opens the scan on the bench from the scan page.
  const a = analyst.page;
  await a.goto(`/scans/${scanId}`);
  await a.getByTestId('open-bench').click();
  await expect(a.getByTestId('bench-lobe-offset-0')).not.toHaveText('—', { timeout: 60_000 });
  await expect(a.getByTestId('bench-status')).toContainText('up to date');
  const before = await offsetOnPage(a);
  await a.screenshot({ path: `${SHOTS}/bench-analyst-start.png`, fullPage: true });

  // Moves the centre half-way by hand and sees the offset change.
  await a.getByTestId('centre-x').fill(String(trueX + 3));
  await expect.poll(async () => Math.abs((await offsetOnPage(a)) - before), { timeout: 20_000 }).toBeGreaterThan(0.05);
  const halfway = await offsetOnPage(a);
  // Runs the centre finder (inversion symmetry for angular streaking), reads its result and uses it.
  await a.getByTestId('tool-centre').click();
  await expect(a.getByTestId('tool-centre-result')).toContainText('inversion symmetry', { timeout: 60_000 });
  await a.screenshot({ path: `${SHOTS}/bench-analyst-centre-tool.png`, fullPage: true });
  await a.getByTestId('tool-centre-accept').click();
  await expect
    .poll(async () => Math.abs(Number(await a.getByTestId('centre-x').inputValue()) - trueX), { timeout: 20_000 })
    .toBeLessThan(0.5);
  await expect.poll(async () => Math.abs((await offsetOnPage(a)) - halfway), { timeout: 20_000 }).toBeGreaterThan(0.05);
  await expect(a.getByTestId('bench-status')).toContainText('up to date');
  await a.screenshot({ path: `${SHOTS}/bench-analyst-centred.png`, fullPage: true });

  // Saves it as a new version with a note.
  await a.getByTestId('bench-note').fill('centre found on the bench');
  await a.getByTestId('bench-save').click();
  await expect(a.getByTestId('bench-saved')).toContainText('calibration v2');

  // Reads what it would change: every step of both scans, with the change in units of its error.
  await a.getByTestId('bench-trial').click();
  await expect(a.getByTestId('bench-trial-progress')).toContainText('4 of 4 steps tried · done', { timeout: 120_000 });
  await expect(a.getByTestId('trial-offset')).toHaveCount(4);
  await expect(a.getByTestId('trial-offset').first()).toContainText('σ');
  await a.screenshot({ path: `${SHOTS}/bench-analyst-trial.png`, fullPage: true });

  // The PI opens the draft from the calibration page, reads the list and approves.
  const p = pi.page;
  await p.setViewportSize({ width: 1500, height: 1100 });
  await p.goto(`/campaigns/${campaignId}/calibration`);
  await p.getByTestId('calibration-versions').getByRole('button', { name: 'Approve v2…' }).click();
  await p.getByTestId('approval-bench-link').click();
  await expect(p.getByTestId('bench-approve')).toBeVisible({ timeout: 60_000 });
  await p.getByTestId('bench-trial').click();
  await expect(p.getByTestId('bench-trial-progress')).toContainText('4 of 4 steps tried · done', { timeout: 120_000 });
  await expect(p.getByTestId('trial-offset')).toHaveCount(4);
  await p.getByTestId('bench-approve').click();
  await expect(p.getByTestId('bench-approved')).toContainText('Approved calibration v2');
  await expect(p.getByTestId('bench-approved')).toContainText('2 of 2 scans queued');
  // The re-reduced results arrive with the new version; the older ones stay, linked to v1.
  await expect(p.getByTestId('rereduced-versions')).toHaveText(['cal v2 · set v1', 'cal v2 · set v1'], {
    timeout: 180_000,
  });
  await p.screenshot({ path: `${SHOTS}/bench-pi-approved.png`, fullPage: true });
  const scan = (await (await pi.request.get(`/api/scans/${scanId}`)).json()) as {
    results: { calibrationVersion: number | null }[];
  };
  expect(scan.results.map((r) => r.calibrationVersion).sort()).toEqual([1, 2]);

  await analyst.context.close();
  await pi.context.close();
});
