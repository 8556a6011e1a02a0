// Campaign comparison (issue 13) as its users meet it, in the seeded demo lab (scripts/seed.ts):
// - the operator sends one generated helium scan to "He 800 nm elliptical" and one argon scan to
//   "Ar 800 nm elliptical" (scripts/make-example.ts, the project's own generator; reduced by the worker);
// - the PI (of both teams) builds a two-campaign comparison with the Coulomb-corrected trajectory overlay, keeps it
//   under a fixed address;
// - an analyst of the team opens that address: the same figure; the exported CSV holds exactly the API's numbers
//   (RFC 4180 reading; every drawn point once, values equal to the JSON doubles) and the SVG holds every series
//   and the model line; the PNG is a PNG at 3 × the drawing's width; both carry the shipped font.
// What is checked is what the page gives against what the API says, not the physics (that is in the unit tests).
import { execFileSync } from 'node:child_process';
import { mkdtempSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { type APIRequestContext, type Browser, expect, type Page, test } from '@playwright/test';
import { DEMO, signIn } from './helpers/auth';

const RUN = Date.now();
const dir = mkdtempSync(path.join(tmpdir(), 'lobeline-compare-e2e-'));
const CAMPAIGNS = [
  { name: 'He 800 nm elliptical', target: 'He' },
  { name: 'Ar 800 nm elliptical', target: 'Ar' },
] as const;

async function asUser(browser: Browser, email: string) {
  const context = await browser.newContext({ acceptDownloads: true, viewport: { width: 1280, height: 1000 } });
  const page = await context.newPage();
  await signIn(page, email);
  return { context, page };
}

async function campaignIds(request: APIRequestContext): Promise<number[]> {
  const res = await request.get('/api/campaigns');
  expect(res.ok()).toBeTruthy();
  const body = (await res.json()) as { campaigns: { id: number; name: string }[] };
  return CAMPAIGNS.map((c) => {
    const id = body.campaigns.find((x) => x.name === c.name)?.id;
    expect(id, `seeded campaign "${c.name}"`).toBeDefined();
    return id as number;
  });
}

async function sendAndWait(
  page: Page,
  campaignId: number,
  target: string,
  kind: 'angular_streaking' | 'two_color_phase' = 'angular_streaking',
  steps = 3,
): Promise<void> {
  const opened = await page.request.post('/api/shifts', { data: { campaignId, title: `Comparison ${target} ${RUN}` } });
  expect(opened.ok(), await opened.text()).toBeTruthy();
  const ob = (await opened.json()) as { shift?: { id: number }; id?: number };
  const shiftId = (ob.shift?.id ?? ob.id) as number;
  const fileName = `compare-${kind}-${target}-${RUN}.h5`;
  const file = path.join(dir, fileName);
  execFileSync(
    'npx',
    [
      'tsx',
      'scripts/make-example.ts',
      '--out',
      file,
      '--kind',
      kind,
      '--target',
      target,
      '--steps',
      String(steps),
      '--size',
      '512',
      '--seed',
      String((RUN % 1e6) + target.length),
    ],
    { stdio: 'ignore' },
  );
  await page.goto(`/shifts/${shiftId}`);
  await page.waitForLoadState('networkidle');
  await page.getByTestId('dropzone-input').setInputFiles([file]);
  await page.getByTestId('send-all').click();
  await expect(page.locator(`[data-testid=drop-item][data-file="${fileName}"]`)).toHaveAttribute('data-phase', 'done', {
    timeout: 90_000,
  });
  await expect
    .poll(
      async () => {
        const r = await page.request.get(
          `/api/campaigns/${campaignId}/scans?q=${encodeURIComponent(fileName)}&pageSize=5`,
        );
        const b = (await r.json()) as { rows: { fileName: string; status: string }[] };
        return b.rows.find((x) => x.fileName === fileName)?.status ?? 'missing';
      },
      { timeout: 180_000, intervals: [1000] },
    )
    .toBe('reduced');
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

interface ApiPoint {
  scanId: number;
  stepIndex: number;
  offsetDeg: number | null;
  offsetErrDeg: number | null;
  offsetSysErrDeg: number | null;
  radiusIntensityWcm2: number | null;
  campaignName: string;
  provenance: { resultId: number; calibrationVersion: number; softwareVersion: string; intensityConvention: string };
}

test('the PI keeps a two-campaign comparison with a model; a team member opens it and exports the same numbers', async ({
  browser,
}) => {
  test.setTimeout(420_000);
  const op = await asUser(browser, DEMO.operator);
  const ids = await campaignIds(op.page.request);
  for (const [i, c] of CAMPAIGNS.entries()) await sendAndWait(op.page, ids[i]!, c.target);
  await op.context.close();

  // the PI builds it
  const pi = await asUser(browser, DEMO.pi);
  await pi.page.getByRole('link', { name: 'Compare' }).first().click();
  await expect(pi.page).toHaveURL(/\/comparisons$/);
  for (const id of ids) await pi.page.getByTestId(`pick-campaign-${id}`).check();
  await pi.page.getByLabel('quantity on the x axis').selectOption('radius_intensity');
  await pi.page.getByTestId('model-trajectory').check();
  const figure = pi.page.getByTestId('comparison-figure').locator('svg');
  await expect(figure).toHaveAttribute('data-series-count', '2', { timeout: 30_000 });
  await expect(figure.locator('[data-model="trajectory"]').first()).toBeVisible({ timeout: 60_000 });
  await expect(pi.page.getByTestId('residual-table')).toBeVisible();
  await expect(pi.page.getByTestId('assumptions-trajectory')).toContainText('zero velocity');
  // the ensemble is a run on the model queue: the page shows its progress (trajectories done of the total)
  await pi.page.getByTestId('model-ensemble').check();
  await expect(pi.page.getByTestId('assumptions-ensemble')).toContainText('ADK');
  await expect(pi.page.getByTestId('model-progress').first()).toContainText(/trajectories/, { timeout: 30_000 });
  await pi.page.screenshot({ path: '.data/test/comparison-ensemble-progress.png', fullPage: true });
  await pi.page.getByTestId('model-ensemble').uncheck();
  await expect(figure.locator('text', { hasText: 'cycle-averaged, total' })).toHaveCount(1); // convention on the axis
  const title = `He and Ar at 800 nm ${RUN}`;
  await pi.page.getByPlaceholder(/Neon offsets/).fill(title);
  await pi.page.getByRole('button', { name: 'Save under a fixed address' }).click();
  await expect(pi.page).toHaveURL(/\/comparisons\/[a-z0-9]{12}$/, { timeout: 30_000 });
  const address = new URL(pi.page.url()).pathname;
  await expect(pi.page.getByRole('heading', { name: title })).toBeVisible();
  await expect(pi.page.getByTestId('comparison-figure').locator('svg')).toHaveAttribute('data-series-count', '2');
  await pi.page.screenshot({ path: '.data/test/comparison-pi.png', fullPage: true });
  await pi.context.close();

  // a member of the team opens the address
  const an = await asUser(browser, DEMO.analyst);
  await an.page.goto(address);
  await expect(an.page.getByRole('heading', { name: title })).toBeVisible();
  const svg = an.page.getByTestId('comparison-figure').locator('svg');
  await expect(svg).toHaveAttribute('data-series-count', '2', { timeout: 30_000 });
  await expect(svg.locator('[data-model="trajectory"]').first()).toBeVisible({ timeout: 60_000 });
  await expect(an.page.getByTestId('hidden-notice')).toHaveCount(0);
  await expect(an.page.getByTestId('save-panel')).toHaveCount(0); // keeping is the PI's

  const api = await an.page.request.get(`/api/comparisons/points?campaigns=${ids.join(',')}`);
  expect(api.ok(), await api.text()).toBeTruthy();
  const answer = (await api.json()) as { points: ApiPoint[]; convention: string };
  const drawn = answer.points.filter(
    (p) => p.offsetDeg !== null && p.radiusIntensityWcm2 !== null && Number.isFinite(p.radiusIntensityWcm2),
  );
  expect(drawn.length).toBeGreaterThanOrEqual(6); // the two scans sent above, 3 steps each, at least

  const [csvDownload] = await Promise.all([
    an.page.waitForEvent('download'),
    an.page.getByRole('button', { name: 'Numbers (CSV)' }).click(),
  ]);
  const csv = readFileSync((await csvDownload.path()) as string, 'utf8');
  const rows = readCsv(csv);
  const h = rows.findIndex((r) => r[0] === 'series');
  const head = rows[h]!;
  const col = (name: string) => head.indexOf(name);
  const body = rows.slice(h + 1);
  expect(body.length).toBe(drawn.length);
  const num = (s: string) => (s === '' ? null : Number(s));
  for (const r of body) {
    const p = drawn.find((q) => q.scanId === Number(r[col('scan_id')]) && q.stepIndex === Number(r[col('step_index')]));
    expect(p, `API point of CSV row ${r.join(',')}`).toBeDefined();
    expect(num(r[col('offset_deg')]!)).toBe(p!.offsetDeg);
    expect(num(r[col('offset_err_deg')]!)).toBe(p!.offsetErrDeg);
    expect(num(r[col('offset_sys_err_deg')]!)).toBe(p!.offsetSysErrDeg);
    expect(num(r[col('radius_intensity_Wcm2')]!)).toBe(p!.radiusIntensityWcm2);
    expect(num(r[col('x')]!)).toBe(p!.radiusIntensityWcm2);
    expect(num(r[col('y')]!)).toBe(p!.offsetDeg);
    expect(Number(r[col('result_id')])).toBe(p!.provenance.resultId);
    expect(Number(r[col('calibration_version')])).toBe(p!.provenance.calibrationVersion);
    expect(r[col('software_version')]).toBe(p!.provenance.softwareVersion);
    expect(r[col('intensity_convention')]).toBe(answer.convention);
    expect(r[col('series')]).toBe(p!.campaignName);
  }

  const [svgDownload] = await Promise.all([
    an.page.waitForEvent('download'),
    an.page.getByRole('button', { name: 'Figure (SVG)' }).click(),
  ]);
  const svgText = readFileSync((await svgDownload.path()) as string, 'utf8');
  expect(svgText).toMatch(/^<\?xml/);
  for (const c of CAMPAIGNS) {
    expect(svgText).toContain(`data-series="${c.name}"`);
    expect(svgText).toContain(`data-key-series="${c.name}"`);
  }
  expect(svgText).toContain('data-model="trajectory"');
  // one marker per drawn point, in the two series groups
  const markers = svgText.match(/<title>[^<]*, step \d+<\/title>/g) ?? [];
  expect(markers.length).toBe(drawn.length);
  // the PNG: the signature of the PNG specification (ISO/IEC 15948 §5.2) and a width of 3 × the drawing (IHDR)
  const [pngDownload] = await Promise.all([
    an.page.waitForEvent('download'),
    an.page.getByRole('button', { name: 'Figure (PNG)' }).click(),
  ]);
  await pngDownload.saveAs('.data/test/comparison-figure.png'); // kept to look at
  await svgDownload.saveAs('.data/test/comparison-figure.svg');
  const png = readFileSync((await pngDownload.path()) as string);
  expect([...png.subarray(0, 8)]).toEqual([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]);
  const viewBoxWidth = Number(/viewBox="0 0 ([\d.]+) /.exec(svgText)?.[1]);
  expect(png.readUInt32BE(16)).toBe(Math.round(viewBoxWidth * 3));
  // The shipped font is in the SVG: an @font-face whose data: URL holds exactly the bytes of app/fonts' woff2.
  const embedded = /url\(data:font\/woff2;base64,([A-Za-z0-9+/=]+)\)/.exec(svgText);
  expect(embedded, 'an @font-face with the woff2 as a data: URL').not.toBeNull();
  expect(
    Buffer.from((embedded as RegExpExecArray)[1] as string, 'base64').equals(
      readFileSync('app/fonts/InterVariable.woff2'),
    ),
  ).toBe(true);
  // ...and the PNG was drawn with it: in the same browser, the exported SVG drawn at 3× gives the PNG's pixels,
  // while the same SVG without its @font-face (the text falls back to another face) gives visibly different ones.
  const pixelsOff = await an.page.evaluate(
    async ({ svg, pngB64 }) => {
      const draw = async (src: string) => {
        const img = new Image();
        img.src = src;
        await img.decode();
        const c = document.createElement('canvas');
        c.width = img.naturalWidth;
        c.height = img.naturalHeight;
        const ctx = c.getContext('2d') as CanvasRenderingContext2D;
        ctx.drawImage(img, 0, 0);
        return ctx.getImageData(0, 0, c.width, c.height).data;
      };
      const fromSvg = async (text: string) => {
        const vb = /viewBox="0 0 ([\d.]+) ([\d.]+)"/.exec(text) as RegExpExecArray;
        const url = URL.createObjectURL(new Blob([text], { type: 'image/svg+xml' }));
        const img = new Image();
        img.src = url;
        await img.decode();
        const c = document.createElement('canvas');
        c.width = Math.round(Number(vb[1]) * 3);
        c.height = Math.round(Number(vb[2]) * 3);
        const ctx = c.getContext('2d') as CanvasRenderingContext2D;
        ctx.drawImage(img, 0, 0, c.width, c.height);
        URL.revokeObjectURL(url);
        return ctx.getImageData(0, 0, c.width, c.height).data;
      };
      const exported = await draw(`data:image/png;base64,${pngB64}`);
      const differing = (a: Uint8ClampedArray, b: Uint8ClampedArray) => {
        if (a.length !== b.length) return Number.POSITIVE_INFINITY;
        let n = 0;
        for (let i = 0; i < a.length; i += 4)
          if (
            Math.abs((a[i] as number) - (b[i] as number)) +
              Math.abs((a[i + 1] as number) - (b[i + 1] as number)) +
              Math.abs((a[i + 2] as number) - (b[i + 2] as number)) >
            24
          )
            n++;
        return n;
      };
      return {
        withFont: differing(exported, await fromSvg(svg)),
        withoutFont: differing(exported, await fromSvg(svg.replace(/@font-face\{[^}]*\}/, ''))),
      };
    },
    { svg: svgText, pngB64: png.toString('base64') },
  );
  expect(pixelsOff.withFont).toBeLessThan(50);
  expect(pixelsOff.withoutFont).toBeGreaterThan(500);
  await an.page.screenshot({ path: '.data/test/comparison-analyst.png', fullPage: true });
  await an.context.close();
});

test('the comparison page fits a 390 px wide screen (its figure narrows, its tables scroll in their panel)', async ({
  browser,
}) => {
  const context = await browser.newContext({ viewport: { width: 390, height: 844 } });
  const page = await context.newPage();
  await signIn(page, DEMO.pi);
  const ids = await campaignIds(page.request);
  await page.goto('/comparisons');
  for (const id of ids) await page.getByTestId(`pick-campaign-${id}`).check();
  await page.getByTestId('model-keldysh_rutherford').check();
  await expect(page.getByTestId('draw-sentence')).toBeVisible();
  await page.waitForLoadState('networkidle');
  const widths = await page.evaluate(() => ({
    page: document.documentElement.scrollWidth,
    view: document.documentElement.clientWidth,
  }));
  expect(widths.page).toBeLessThanOrEqual(widths.view);
  await page.screenshot({ path: '.data/test/comparison-390.png', fullPage: true });
  await context.close();
});

test('two-colour phase scans bring their phase-delay curves, with phase of maximum and contrast', async ({
  browser,
}) => {
  test.setTimeout(300_000);
  const name = 'Ar 800 + 400 nm phase scan';
  const sender = await asUser(browser, DEMO.phaseAnalyst);
  const list = (await (await sender.page.request.get('/api/campaigns')).json()) as {
    campaigns: { id: number; name: string }[];
  };
  const cid = list.campaigns.find((c) => c.name === name)?.id;
  expect(cid, `seeded campaign "${name}"`).toBeDefined();
  await sendAndWait(sender.page, cid as number, 'Ar', 'two_color_phase', 12);
  await sender.context.close();

  const pi = await asUser(browser, DEMO.pi);
  await pi.page.goto('/comparisons');
  await pi.page.getByTestId(`pick-campaign-${cid}`).check();
  const panel = pi.page.getByTestId('phase-panel');
  await expect(panel).toBeVisible({ timeout: 30_000 });
  const api = await pi.page.request.get(`/api/comparisons/points?campaigns=${cid}`);
  const answer = (await api.json()) as {
    phaseCurves: { scanId: number; region: string; phaseRad: number[]; contrast: number; phaseOfMaxRad: number }[];
  };
  const firstRegion = answer.phaseCurves[0]!.region;
  const shown = answer.phaseCurves.filter((c) => c.region === firstRegion);
  expect(shown.length).toBeGreaterThan(0);
  const svg = panel.getByTestId('comparison-figure').locator('svg');
  await expect(svg).toHaveAttribute('data-series-count', String(shown.length));
  // one marker per phase of each curve, and the fit numbers in the table as the API gives them
  await expect(svg.locator('path title')).toHaveCount(shown.reduce((n, c) => n + c.phaseRad.length, 0));
  const table = panel.getByTestId('phase-table');
  for (const c of shown) {
    await expect(table).toContainText(c.phaseOfMaxRad.toFixed(3));
    await expect(table).toContainText(c.contrast.toFixed(3));
  }
  const [download] = await Promise.all([
    pi.page.waitForEvent('download'),
    panel.getByRole('button', { name: 'Curves (CSV)' }).click(),
  ]);
  const rows = readCsv(readFileSync((await download.path()) as string, 'utf8'));
  const h = rows.findIndex((r) => r[0] === 'curve');
  expect(rows.length - h - 1).toBe(shown.reduce((n, c) => n + c.phaseRad.length, 0));
  await panel.screenshot({ path: '.data/test/comparison-phase.png' });
  await pi.context.close();
});
