// Everyday use of the shift, campaign and scan pages (issue 11, points 7 and 12), as the demo users of
// scripts/seed.ts in the seeded "Ar 800 nm elliptical" campaign (approved calibration and settings v1):
// - the shift page, the campaign table and the campaign trend follow the worker without a reload;
// - an analyst flags a scan with a reason; the table's flag filter and the trend's hollow markers follow;
// - "Reduce with these versions" says what became of the job, not "Queued" for ever;
// - a quarantined scan says it waits for a release and offers no reduction (the route would answer 409);
// - the trend has log axes and exports its table as CSV (RFC 4180) and the figure as SVG and PNG (PNG signature and
//   IHDR layout from the PNG specification, ISO/IEC 15948 §5.2 and §11.2.2); its legend never repeats a colour and
//   marker pair (the Okabe–Ito colour-blind-safe set, Okabe & Ito 2008);
// - the receipt of a closed shift is reachable from the campaign page, and an old seeded shift's receipt does not
//   claim an e-mail that was never on record;
// - leaving a shift page with a checked but unsent file asks first (the beforeunload event, HTML Living Standard).
// Scan files come from the project's generator (scripts/make-example.ts); what is checked is what the page shows
// against what the API says, not the physics.
import { execFileSync } from 'node:child_process';
import { mkdtempSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { type APIRequestContext, type Browser, expect, type Page, test } from '@playwright/test';
import { DEMO, signIn } from './helpers/auth';

const CAMPAIGN = 'Ar 800 nm elliptical';
const RUN = Date.now();
const dir = mkdtempSync(path.join(tmpdir(), 'lobeline-follow-e2e-'));

function makeExample(name: string, args: string[]): string {
  const out = path.join(dir, name);
  execFileSync('npx', ['tsx', 'scripts/make-example.ts', '--out', out, ...args], { stdio: 'ignore' });
  return out;
}

async function asUser(browser: Browser, email: string) {
  const context = await browser.newContext({ acceptDownloads: true });
  const page = await context.newPage();
  await signIn(page, email);
  return { context, page };
}

async function campaignId(request: APIRequestContext): Promise<number> {
  const res = await request.get('/api/campaigns');
  expect(res.ok()).toBeTruthy();
  const body = (await res.json()) as { campaigns: { id: number; name: string }[] };
  const id = body.campaigns.find((c) => c.name === CAMPAIGN)?.id;
  expect(id, `seeded campaign "${CAMPAIGN}"`).toBeDefined();
  return id as number;
}

async function openShift(page: Page, cid: number, title: string): Promise<number> {
  const opened = await page.request.post('/api/shifts', { data: { campaignId: cid, title } });
  expect(opened.ok(), await opened.text()).toBeTruthy();
  const body = (await opened.json()) as { shift?: { id: number }; id?: number };
  return (body.shift?.id ?? body.id) as number;
}

async function scanRow(request: APIRequestContext, cid: number, fileName: string) {
  const res = await request.get(`/api/campaigns/${cid}/scans?q=${encodeURIComponent(fileName)}&pageSize=5`);
  expect(res.ok()).toBeTruthy();
  const body = (await res.json()) as { rows: { id: number; fileName: string; title: string | null; status: string }[] };
  const row = body.rows.find((r) => r.fileName === fileName);
  expect(row, `scan of ${fileName}`).toBeDefined();
  return row as { id: number; fileName: string; title: string | null; status: string };
}

/** RFC 4180 reader (section 2): comma-separated fields, double-quoted fields with "" for a quote, CRLF records. */
function readCsv(text: string): string[][] {
  const rows: string[][] = [];
  let row: string[] = [];
  let field = '';
  let quoted = false;
  for (let i = 0; i < text.length; i++) {
    const c = text[i] as string;
    if (quoted) {
      if (c === '"' && text[i + 1] === '"') {
        field += '"';
        i++;
      } else if (c === '"') quoted = false;
      else field += c;
    } else if (c === '"') quoted = true;
    else if (c === ',') {
      row.push(field);
      field = '';
    } else if (c === '\r' && text[i + 1] === '\n') {
      row.push(field);
      rows.push(row);
      row = [];
      field = '';
      i++;
    } else field += c;
  }
  return rows;
}

/** Shared between the tests below. */
const shared: { cid: number; shiftId: number; scanId: number; scanTitle: string; fileName: string; file: string } = {
  file: '',
  cid: 0,
  shiftId: 0,
  scanId: 0,
  scanTitle: '',
  fileName: '',
};

/** Polls the API (not a page) until the scan of `fileName` has left the worker's states. */
async function waitSettled(request: APIRequestContext, cid: number, fileName: string) {
  await expect
    .poll(async () => (await scanRow(request, cid, fileName)).status, { timeout: 150_000, intervals: [1000] })
    .toMatch(/^(reduced|failed|quarantined)$/);
  return scanRow(request, cid, fileName);
}

function makeScanFile(fileName: string): string {
  return makeExample(fileName, [
    '--kind',
    'angular_streaking',
    '--target',
    'Ar',
    '--steps',
    '3',
    '--size',
    '512', // the seeded calibration v1 is centred on a 512-pixel frame
    '--seed',
    String(RUN % 1e6),
  ]);
}

/** Sends files from a shift page as the user of `page` and waits until each is stored. */
async function sendFiles(page: Page, shiftId: number, files: string[]) {
  await page.goto(`/shifts/${shiftId}`);
  await page.waitForLoadState('networkidle'); // the drop zone must be hydrated before files are set
  await page.getByTestId('dropzone-input').setInputFiles(files);
  await page.getByTestId('send-all').click();
  for (const f of files) {
    await expect(page.locator(`[data-testid=drop-item][data-file="${path.basename(f)}"]`)).toHaveAttribute(
      'data-phase',
      'done',
      { timeout: 90_000 },
    );
  }
}

/**
 * The reduced scan the later tests work on: the first test's, or (when that test failed and the worker process was
 * restarted, losing this module's state) a new one sent and waited for here.
 */
async function ensureScan(browser: Browser): Promise<void> {
  if (shared.scanId) return;
  const op = await asUser(browser, DEMO.operator);
  shared.cid = await campaignId(op.page.request);
  shared.shiftId = await openShift(op.page, shared.cid, `Follow the worker, again ${RUN}`);
  shared.fileName = `follow-again-${RUN}.h5`;
  shared.file = makeScanFile(shared.fileName);
  await sendFiles(op.page, shared.shiftId, [shared.file]);
  const row = await waitSettled(op.page.request, shared.cid, shared.fileName);
  expect(row.status).toBe('reduced');
  shared.scanId = row.id;
  shared.scanTitle = row.title ?? shared.fileName;
  await op.context.close();
}

// Not serial: each test stands alone (a failing one does not skip the others), sharing the reduced scan when it can.
test.describe('pages follow the worker; flags, trend tools and receipts', () => {
  test('the shift page, the campaign table and the trend follow the worker without a reload', async ({ browser }) => {
    test.setTimeout(240_000);
    const op = await asUser(browser, DEMO.operator);
    const pi = await asUser(browser, DEMO.pi);
    const cid = await campaignId(op.page.request);
    shared.cid = cid;
    // The PI watches the campaign page while the operator sends a file from a shift page (another page).
    await pi.page.goto(`/campaigns/${cid}`);
    await expect(pi.page.getByTestId('scans-table')).toBeVisible();

    const fileName = `follow-${RUN}.h5`;
    const file = makeScanFile(fileName);
    const shiftId = await openShift(op.page, cid, `Follow the worker ${RUN}`);
    shared.shiftId = shiftId;
    await sendFiles(op.page, shiftId, [file]);
    const stored = op.page.locator(`[data-testid=stored-file][data-file="${fileName}"]`);
    await expect(stored).toHaveAttribute('data-status', 'accepted', { timeout: 90_000 });
    // No reload: the stored row moves on from queued/reducing to reduced by itself.
    await expect(stored).toContainText('· reduced', { timeout: 150_000 });

    const row = await scanRow(op.page.request, cid, fileName);
    expect(row.status).toBe('reduced');
    shared.scanId = row.id;
    shared.fileName = fileName;
    shared.file = file;
    shared.scanTitle = row.title ?? fileName;

    // The PI's page, opened before the file existed, shows it in the table and in the trend without a reload.
    await expect(pi.page.getByTestId('scans-table')).toContainText(fileName, { timeout: 60_000 });
    const trend = pi.page.getByTestId('trend-plot');
    await expect(trend.locator('title', { hasText: `${shared.scanTitle}, step 0` })).toHaveCount(1, {
      timeout: 60_000,
    });
    await op.context.close();
    await pi.context.close();
  });

  test('an analyst flags a scan with a reason; the table filter and the hollow trend markers follow', async ({
    browser,
  }) => {
    test.setTimeout(300_000);
    await ensureScan(browser);
    const an = await asUser(browser, DEMO.analyst);
    await an.page.goto(`/scans/${shared.scanId}`);
    const control = an.page.getByTestId('flag-control');
    await expect(control).toHaveAttribute('data-flagged', 'false');
    await control.getByTestId('flag-open').click();
    // A reason is required: the server's sentence is shown and nothing is flagged.
    await control.getByTestId('flag-submit').click();
    await expect(control.getByRole('status')).toContainText('reason');
    await expect(control).toHaveAttribute('data-flagged', 'false');
    const reason = `Jet pressure dropped during step 2 (${RUN})`;
    await control.getByLabel('Why the scan needs a second look').fill(reason);
    await control.getByTestId('flag-submit').click();
    await expect(control).toHaveAttribute('data-flagged', 'true');
    await expect(control.getByTestId('flag-note')).toContainText(reason);

    // The API agrees, and the flag filter of the campaign table lists the scan.
    const detail = (await (await an.page.request.get(`/api/scans/${shared.scanId}`)).json()) as {
      scan: { flagged: boolean; flagNote: string | null };
    };
    expect(detail.scan).toMatchObject({ flagged: true, flagNote: reason });
    await an.page.goto(`/campaigns/${shared.cid}`);
    await an.page.getByTestId('scans-table').getByLabel('Flag').selectOption('true');
    await expect(an.page.getByTestId('scans-table')).toContainText(shared.fileName);
    // Every marker of the flagged scan in the trend is hollow.
    const markers = an.page.getByTestId('trend-plot').locator('path[data-marker]', {
      has: an.page.locator('title', { hasText: shared.scanTitle }),
    });
    await expect(markers).toHaveCount(3);
    for (const m of await markers.all()) await expect(m).toHaveAttribute('data-hollow', 'true');

    // An operator may see the flag but not set one (PRODUCT.md roles; the route answers 403).
    const op = await asUser(browser, DEMO.operator);
    await op.page.goto(`/scans/${shared.scanId}`);
    await expect(op.page.getByTestId('flag-note')).toContainText(reason);
    await expect(op.page.getByTestId('flag-open')).toHaveCount(0);
    const refused = await op.page.request.put(`/api/scans/${shared.scanId}/flag`, {
      data: { flagged: false, reason: 'not mine to clear' },
    });
    expect(refused.status()).toBe(403);
    await op.context.close();
    await an.context.close();
  });

  test('"Reduce with these versions" says what became of the job instead of "Queued" for ever', async ({ browser }) => {
    test.setTimeout(300_000);
    await ensureScan(browser);
    const an = await asUser(browser, DEMO.analyst);
    // A draft calibration: the generator's own calibration of the first test's file (any version of the campaign
    // may reduce a scan; the approved pair stays as it is).
    const calibration = JSON.parse(readFileSync(shared.file.replace(/\.h5$/, '.calibration.json'), 'utf8')) as unknown;
    const created = await an.page.request.post(`/api/campaigns/${shared.cid}/calibrations`, {
      data: { body: calibration, note: `generator calibration for the reduce-again check ${RUN}` },
    });
    expect(created.ok(), await created.text()).toBeTruthy();
    const draft = ((await created.json()) as { version: { id: number; version: number } }).version;

    await an.page.goto(`/scans/${shared.scanId}`);
    const form = an.page.getByTestId('reduce-again');
    await form.getByLabel('Calibration').selectOption(String(draft.id));
    await form.getByRole('button', { name: 'Reduce with these versions' }).click();
    // No reload: the page shows the new result, and the form no longer says the job is queued.
    await expect(an.page.getByTestId('result-panel')).toContainText(`calibration v${draft.version}`, {
      timeout: 150_000,
    });
    await expect(form).not.toContainText('Queued');
    await expect(an.page.getByTestId('reduce-again-status')).toContainText('Done');
    await an.context.close();
  });

  test('a quarantined scan does not promise a result and offers no reduction', async ({ browser }) => {
    test.setTimeout(300_000);
    await ensureScan(browser);
    const op = await asUser(browser, DEMO.operator);
    const fileName = `follow-no-wavelength-${RUN}.h5`;
    const file = makeExample(fileName, [
      '--kind',
      'angular_streaking',
      '--target',
      'Ar',
      '--broken',
      'missing_wavelength',
    ]);
    await op.page.goto(`/shifts/${shared.shiftId}`);
    await op.page.waitForLoadState('networkidle');
    await op.page.getByTestId('dropzone-input').setInputFiles([file]);
    const item = op.page.locator(`[data-testid=drop-item][data-file="${fileName}"]`);
    await expect(item.getByTestId('precheck-problems')).toContainText('wavelength');
    await item.getByRole('checkbox').check();
    await op.page.getByTestId('send-all').click();
    await expect(item).toHaveAttribute('data-phase', 'done', { timeout: 90_000 });
    const row = await scanRow(op.page.request, shared.cid, fileName);
    expect(row.status).toBe('quarantined');
    await op.context.close();

    const an = await asUser(browser, DEMO.analyst);
    await an.page.goto(`/scans/${row.id}`);
    const result = an.page.getByTestId('result-panel');
    await expect(result).toContainText('quarantined');
    await expect(result).not.toContainText('when the worker is done');
    await expect(an.page.getByRole('button', { name: 'Reduce with these versions' })).toHaveCount(0);
    await expect(an.page.getByTestId('reduce-quarantined')).toContainText('released');
    // The route itself refuses, so offering the button would only lead to an error.
    const refused = await an.page.request.post(`/api/scans/${row.id}/reduce`, { data: {} });
    expect(refused.status()).toBe(409);
    await an.context.close();
  });

  test('the trend has log axes, CSV/SVG/PNG exports and a legend without repeated colour–marker pairs', async ({
    browser,
  }) => {
    test.setTimeout(300_000);
    await ensureScan(browser);
    const pi = await asUser(browser, DEMO.pi);
    await pi.page.goto(`/campaigns/${shared.cid}`);
    const panel = pi.page.getByTestId('trend-panel');
    const svg = panel.locator('figure svg').first();
    await expect(svg).toBeVisible();
    await panel.getByLabel('Show').selectOption('radius');
    await panel.getByTestId('y-scale-log').click();
    await expect(svg).toHaveAttribute('data-y-scale', 'log');

    // CSV: one row per step of the plotted scans, the same numbers as the API.
    const api = (await (await pi.page.request.get(`/api/campaigns/${shared.cid}/trends`)).json()) as {
      points: { scanId: number; stepIndex: number; radiusAu: number | null }[];
    };
    const [csvDl] = await Promise.all([
      pi.page.waitForEvent('download'),
      panel.getByRole('button', { name: 'Table (CSV)' }).click(),
    ]);
    const csv = readFileSync(await csvDl.path(), 'utf8');
    expect(csv.endsWith('\r\n')).toBe(true);
    const records = readCsv(csv).filter((r) => !(r[0] ?? '').startsWith('#'));
    const header = records[0] ?? [];
    expect(header).toContain('radius_au');
    const iScan = header.indexOf('scan_id');
    const iStep = header.indexOf('step_index');
    const iRadius = header.indexOf('radius_au');
    expect(records.slice(1).every((r) => r.length === header.length)).toBe(true);
    const ours = api.points.filter((p) => p.scanId === shared.scanId);
    expect(ours.length).toBe(3);
    for (const p of ours) {
      const rec = records.find((r) => r[iScan] === String(p.scanId) && r[iStep] === String(p.stepIndex));
      expect(rec, `CSV row of scan ${p.scanId} step ${p.stepIndex}`).toBeDefined();
      expect(Number((rec as string[])[iRadius])).toBe(p.radiusAu);
    }

    // SVG: a standalone document with the markers and the log axis.
    const [svgDl] = await Promise.all([
      pi.page.waitForEvent('download'),
      panel.getByRole('button', { name: 'Figure (SVG)' }).click(),
    ]);
    const svgText = readFileSync(await svgDl.path(), 'utf8');
    expect(svgText).toMatch(/^<\?xml/);
    expect(svgText).toContain('xmlns="http://www.w3.org/2000/svg"');
    expect(svgText).toContain('data-y-scale="log"');
    expect((svgText.match(/data-marker=/g) ?? []).length).toBeGreaterThanOrEqual(3);

    // PNG: signature, then the IHDR chunk with width and height (big-endian) at twice the 640-unit view box.
    const [pngDl] = await Promise.all([
      pi.page.waitForEvent('download'),
      panel.getByRole('button', { name: 'Figure (PNG)' }).click(),
    ]);
    const png = readFileSync(await pngDl.path());
    expect([...png.subarray(0, 8)]).toEqual([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]);
    expect(png.subarray(12, 16).toString('ascii')).toBe('IHDR');
    expect(png.readUInt32BE(16)).toBe(1280);

    // Legend: every entry a different (colour, marker) pair, colours from the Okabe–Ito set.
    const okabeIto = ['#000000', '#E69F00', '#56B4E9', '#009E73', '#0072B2', '#D55E00', '#CC79A7'];
    const entries = panel.getByTestId('legend-entry');
    const n = await entries.count();
    const pairs = new Set<string>();
    for (let i = 0; i < n; i++) {
      const e = entries.nth(i);
      const color = (await e.getAttribute('data-color')) ?? '';
      const marker = (await e.getAttribute('data-marker')) ?? '';
      expect(okabeIto).toContain(color);
      pairs.add(`${color}/${marker}`);
    }
    expect(pairs.size).toBe(n);
    await pi.page.screenshot({ path: test.info().outputPath('trend-log.png'), fullPage: true });
    await pi.context.close();
  });

  test('closed shifts link their receipt; an old seeded shift does not claim a missing e-mail', async ({ page }) => {
    await signIn(page, DEMO.operator);
    const res = await page.request.get('/api/campaigns');
    const he = ((await res.json()) as { campaigns: { id: number; name: string }[] }).campaigns.find(
      (c) => c.name === 'He 800 nm elliptical',
    );
    expect(he).toBeDefined();
    await page.goto(`/campaigns/${(he as { id: number }).id}`);
    await page.getByTestId('shift-receipt-link').first().click();
    const receipt = page.getByTestId('receipt-panel');
    await expect(receipt).toBeVisible();
    await expect(receipt.getByTestId('receipt')).toContainText('Closed');
    await expect(receipt).not.toContainText('has not been sent');
  });

  test('leaving a shift page with a checked but unsent file asks first', async ({ page }) => {
    await signIn(page, DEMO.operator);
    if (!shared.shiftId) {
      shared.cid = await campaignId(page.request);
      shared.shiftId = await openShift(page, shared.cid, `Leave warning ${RUN}`);
    }
    const fileName = `follow-unsent-${RUN}.h5`;
    const file = makeExample(fileName, [
      '--kind',
      'angular_streaking',
      '--target',
      'Ar',
      '--steps',
      '2',
      '--size',
      '128',
    ]);
    await page.goto(`/shifts/${shared.shiftId}`);
    await page.waitForLoadState('networkidle');
    await page.getByTestId('dropzone-input').setInputFiles([file]);
    const item = page.locator(`[data-testid=drop-item][data-file="${fileName}"]`);
    await expect(item.getByTestId('precheck-summary')).toBeVisible();
    // Browsers ask only on a page the user has interacted with.
    await page.getByTestId('stored-files').click({ position: { x: 5, y: 5 } });
    const asked = new Promise<string>((resolve) =>
      page.once('dialog', (d) => {
        resolve(d.type());
        void d.accept(); // then leave
      }),
    );
    const closed = page.waitForEvent('close').then(() => 'closed without asking');
    await page.close({ runBeforeUnload: true });
    expect(await Promise.race([asked, closed])).toBe('beforeunload');
  });
});
