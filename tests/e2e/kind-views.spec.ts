// Each experiment kind's scan page shows only what applies to it (issue 11, point 11; C6). A two-colour ω–2ω phase
// scan is analysed per pixel against the relative phase: no lobe markers, simple-man directions, lobe-radius ring,
// fitted peak model, offset or adiabatic intensity estimate belong on its page (the lobe picture is the angular-
// streaking one, SCIENCE.md). A bicircular scan's lobe models are drawn as curves around their lobes: none may run
// across the whole azimuth axis (θ is periodic, −180° and +180° are the same direction, so a lobe near ±180° has its
// model in two pieces, one at each end). Files come from the project's generator (scripts/make-example.ts), uploaded
// through the shift page as the phase-team analyst of scripts/seed.ts.
import { execFileSync } from 'node:child_process';
import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { expect, type Page, test } from '@playwright/test';
import { DEMO, signIn } from './helpers/auth';

const RUN = Date.now();
const dir = mkdtempSync(path.join(tmpdir(), 'lobeline-kinds-e2e-'));
/** The amber of the fitted peak model in components/scans/distributions-panel.tsx. */
const FIT_COLOR = '#e3770c';

function makeExample(name: string, args: string[]): string {
  const out = path.join(dir, name);
  execFileSync('npx', ['tsx', 'scripts/make-example.ts', '--out', out, ...args], { stdio: 'ignore' });
  return out;
}

/** Uploads one file on a new shift of the named campaign and opens its scan page once it is reduced. */
async function uploadAndOpen(page: Page, campaign: string, file: string): Promise<void> {
  const res = await page.request.get('/api/campaigns');
  const c = ((await res.json()) as { campaigns: { id: number; name: string }[] }).campaigns.find(
    (x) => x.name === campaign,
  );
  expect(c, `seeded campaign "${campaign}"`).toBeDefined();
  const cid = (c as { id: number }).id;
  const opened = await page.request.post('/api/shifts', {
    data: { campaignId: cid, title: `Kinds ${RUN} ${campaign}` },
  });
  expect(opened.ok(), await opened.text()).toBeTruthy();
  const sb = (await opened.json()) as { shift?: { id: number }; id?: number };
  await page.goto(`/shifts/${sb.shift?.id ?? sb.id}`);
  await page.waitForLoadState('networkidle');
  await page.getByTestId('dropzone-input').setInputFiles([file]);
  await page.getByTestId('send-all').click();
  const name = path.basename(file);
  await expect(page.locator(`[data-testid=drop-item][data-file="${name}"]`)).toHaveAttribute('data-phase', 'done', {
    timeout: 90_000,
  });
  const rows = await page.request.get(`/api/campaigns/${cid}/scans?q=${encodeURIComponent(name)}&pageSize=5`);
  const row = ((await rows.json()) as { rows: { id: number; fileName: string }[] }).rows.find(
    (r) => r.fileName === name,
  );
  expect(row, `scan of ${name}`).toBeDefined();
  await page.goto(`/scans/${(row as { id: number }).id}`);
  await expect(page.getByTestId('scan-status')).toHaveAttribute('data-status', 'reduced', { timeout: 150_000 });
}

test('a two-colour phase scan shows no angular-streaking overlays, fits or intensity notes', async ({ page }) => {
  test.setTimeout(300_000);
  const file = makeExample(`kinds-phase-${RUN}.h5`, [
    '--kind',
    'two_color_phase',
    '--target',
    'Ar',
    '--steps',
    '8',
    '--size',
    '512',
    '--seed',
    '11',
  ]);
  await signIn(page, DEMO.phaseAnalyst);
  await uploadAndOpen(page, 'Ar 800 + 400 nm phase scan', file);
  await expect(page.getByTestId('phase-panel')).toBeVisible();
  await expect(page.getByTestId('momentum-image').locator('canvas')).toBeVisible();
  await expect(page.getByTestId('angular-plot')).toBeVisible();
  // no fitted lobe model, no lobe guides' legend, no lobe / simple-man legend under the image
  await expect(page.getByTestId('angular-plot').locator(`path[data-line][stroke="${FIT_COLOR}"]`)).toHaveCount(0);
  await expect(page.getByTestId('angular-legend')).toHaveCount(0);
  await expect(page.getByText('simple-man direction (−A at the field maximum)')).toHaveCount(0);
  await expect(page.getByTestId('momentum-plain-note')).toBeVisible();
  const table = page.getByTestId('step-table');
  await expect(table).toBeVisible();
  await expect(table.locator('th')).not.toContainText(['Radius (a.u.)']);
  await expect(table.locator('th', { hasText: 'Offset' })).toHaveCount(0);
  // the table's note speaks of bootstrap errors and the intensity convention only where lobes are measured
  await expect(table.locator('xpath=..')).not.toContainText('adiabatic');
  await page.screenshot({ path: test.info().outputPath('two-colour-scan.png'), fullPage: true });
});

test('a bicircular scan draws every lobe model around its lobe, none across the azimuth axis', async ({ page }) => {
  test.setTimeout(300_000);
  const file = makeExample(`kinds-bicircular-${RUN}.h5`, [
    '--kind',
    'bicircular',
    '--target',
    'Ne',
    '--wavelength',
    '1300',
    '--steps',
    '2',
    '--size',
    '512',
    '--seed',
    '12',
  ]);
  await signIn(page, DEMO.phaseAnalyst);
  await uploadAndOpen(page, 'Ne 1300 nm bicircular', file);
  const plot = page.getByTestId('angular-plot');
  await expect(plot).toBeVisible();
  const fits = plot.locator(`path[data-line][stroke="${FIT_COLOR}"]`);
  await expect(fits.first()).toBeVisible();
  // x of the plot frame: the axis runs from −180° to 180° across the frame's width (viewBox units)
  const frame = await plot
    .locator('svg > rect')
    .first()
    .evaluate((r) => Number(r.getAttribute('width')));
  const spans = await fits.evaluateAll((els) =>
    els.map((el) => {
      // the line's path: "M x,y L x,y …" (absolute coordinates, as Observable Plot's line mark writes it)
      const xs = (el.getAttribute('d') ?? '')
        .split(/[ML]/)
        .filter((p) => p.trim() !== '')
        .map((p) => Number(p.split(',')[0]));
      return Math.max(...xs) - Math.min(...xs);
    }),
  );
  expect(spans.length).toBeGreaterThanOrEqual(3);
  // A lobe model covers its fit window: ±fit_half_width, or ±3σ clipped half-way to the neighbouring lobes (≤ ±60° for
  // three lobes), i.e. under half the axis.
  for (const s of spans) expect(s).toBeLessThan(frame / 2);
  await page.screenshot({ path: test.info().outputPath('bicircular-scan.png'), fullPage: true });
});

test('the helicity-difference panel shows on bicircular campaigns, not on two-colour phase campaigns', async ({
  page,
}) => {
  await signIn(page, DEMO.phaseAnalyst);
  const res = await page.request.get('/api/campaigns');
  const all = ((await res.json()) as { campaigns: { id: number; name: string }[] }).campaigns;
  for (const [name, shown] of [
    ['Ar 800 + 400 nm phase scan', false],
    ['Ne 1300 nm bicircular', true],
  ] as const) {
    const c = all.find((x) => x.name === name);
    expect(c, `seeded campaign "${name}"`).toBeDefined();
    await page.goto(`/campaigns/${(c as { id: number }).id}`);
    await expect(page.getByRole('heading', { name: 'Trend across scans' })).toBeVisible();
    await expect(page.getByRole('heading', { name: 'Helicity difference' })).toHaveCount(shown ? 1 : 0);
  }
});
