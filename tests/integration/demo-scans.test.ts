// Every view of every demo scan loads (issue: the demo two-colour scan's four maps answered "The result file has no
// entry/result/phase/px"). The demo files are made exactly as scripts/demo-scans.ts makes them (its DEMO_FILES and
// writeDemoFile), reduced with the seeded demo calibration v1 (scripts/seed.ts) by the worker's own job
// (lib/jobs/reduce-scan.ts), then every step's momentum image and curves, every phase map and a drawn region are
// asked for through the scan page's routes. The expected groups and datasets are those of FORMATS §5.
//
// The cause was the result-array cache: it named its local copies by result id only, in a folder under the OS
// temp folder that every database on the machine shares (the dev instance, the test instance, a demo reset), so a
// result id seen before in another database served that database's file. The first test shows it directly.
import { createHash, randomUUID } from 'node:crypto';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';

vi.mock('server-only', () => ({}));

const imageRoute = await import('@/app/api/scans/[scanId]/image/route');
const curvesRoute = await import('@/app/api/scans/[scanId]/curves/route');
const regionRoute = await import('@/app/api/scans/[scanId]/region/route');
const { getDb, closeSequelize } = await import('@/lib/db');
const { processReduction } = await import('@/lib/jobs/reduce-scan');
const { readResultImage } = await import('@/lib/jobs/result-arrays');
const { closeReductionQueue } = await import('@/lib/queue/reduction-queue');
const { buckets, putObject, closeS3Client } = await import('@/lib/storage/s3');
const models = await import('@/models');
const { parseCalibration, parseSettings } = await import('@/reduction/formats');
const { openScanPath } = await import('@/reduction/hdf5/node');
const { DEMO_FILES, writeDemoFile } = await import('@/scripts/demo-scans');
const { DEMO_CALIBRATION_INPUT } = await import('@/scripts/seed');
const { callRoute } = await import('./helpers/call');
const { actAs, clearSession } = await import('./helpers/session');
const { makeWorld } = await import('./helpers/world');
const { rawFileRow } = await import('./helpers/rows');

type World = Awaited<ReturnType<typeof makeWorld>>;
let world: World;
const work = mkdtempSync(path.join(tmpdir(), 'lobeline-demo-views-'));
const teamSlug = () => `ta-${world.run}`;

interface Reduced {
  fileName: string;
  kind: string;
  scanId: number;
  resultId: number;
  nSteps: number;
  bucket: string;
  key: string;
}
const reduced: Reduced[] = [];

/** A campaign like the seeded one of that name, with the seed's calibration and settings (fewer resamples). */
async function campaignFor(name: string, kind: string, target: string, wavelengthNm: number) {
  const cal = parseCalibration(DEMO_CALIBRATION_INPUT);
  // The seed's settings for this kind (scripts/seed.ts), with 20 bootstrap resamples instead of 200 for speed.
  const set = parseSettings(
    kind === 'angular_streaking'
      ? { bootstrap: { resamples: 20, seed: 7 } }
      : { lobes: kind === 'bicircular' ? 3 : 'auto', bootstrap: { resamples: 20, seed: 7 } },
  );
  if (!cal.ok || !set.ok) throw new Error('the demo calibration or settings do not parse');
  const campaign = await models.Campaign.create({
    team_id: world.teamA,
    name: `${name} ${world.run}`,
    target,
    wavelength_nm: wavelengthNm,
    experiment_kind: kind as never,
    description: null,
    created_by: null,
    current_calibration_id: null,
    current_settings_id: null,
    embargo_until: null,
  });
  const common = { campaign_id: campaign.id, version: 1, note: 'demo v1', status: 'approved' as const };
  const c = await models.DetectorCalibrationVersion.create({
    ...common,
    body: cal.value,
    created_by: null,
    approved_by: null,
    approved_at: new Date(),
    locked_at: null,
  });
  const s = await models.AnalysisSettingsVersion.create({
    ...common,
    body: set.value,
    created_by: null,
    approved_by: null,
    approved_at: new Date(),
    locked_at: null,
  });
  await campaign.update({ current_calibration_id: c.id, current_settings_id: s.id });
  const shift = await models.Shift.create({
    team_id: world.teamA,
    campaign_id: campaign.id,
    title: 'demo views',
    opened_by: world.users.operator,
    opened_at: new Date(),
    closed_by: null,
    closed_at: null,
    receipt_sent_at: null,
  });
  return { campaignId: campaign.id, shiftId: shift.id, calibrationId: c.id, settingsId: s.id };
}

beforeAll(async () => {
  getDb();
  world = await makeWorld();
  const campaigns = new Map<string, Awaited<ReturnType<typeof campaignFor>>>();
  for (const f of DEMO_FILES) {
    if (f.broken) continue; // the deliberately broken demo file is quarantined: it has no result views
    const o = f.options;
    let c = campaigns.get(f.campaign);
    if (!c) {
      c = await campaignFor(f.campaign, o.kind, o.target ?? 'He', o.wavelengthNm ?? 800);
      campaigns.set(f.campaign, c);
    }
    const local = path.join(work, f.fileName);
    await writeDemoFile(f, local);
    const bytes = new Uint8Array(readFileSync(local));
    const opened = await openScanPath(local);
    if (!opened.ok) throw new Error(`${f.fileName} does not open: ${JSON.stringify(opened.problems)}`);
    const meta = opened.scan.meta;
    opened.scan.close();
    const key = `raw/${teamSlug()}/${c.shiftId}/${randomUUID()}.h5`;
    await putObject({ bucket: buckets().raw, key, body: bytes, contentLength: bytes.length });
    const raw = await models.RawFile.create(
      rawFileRow(world.teamA, {
        sha256: createHash('sha256').update(bytes).digest('hex'),
        storage_key: key,
        size_bytes: bytes.length,
        original_name: f.fileName,
        metadata: meta,
      }),
    );
    const scan = await models.Scan.create({
      team_id: world.teamA,
      campaign_id: c.campaignId,
      shift_id: c.shiftId,
      raw_file_id: raw.id,
      experiment_kind: o.kind,
      title: f.text.title,
      target: meta.target,
      wavelength_nm: meta.wavelengthNm,
      ellipticity: meta.ellipticity,
      helicity: meta.helicity,
      step_quantity: meta.step.quantity,
      n_steps: meta.shape.nStep,
      n_y: meta.shape.nY,
      n_x: meta.shape.nX,
      started_at: new Date(),
      status: 'uploaded',
      status_message: null,
      flag_note: null,
      latest_result_id: null,
      offset_deg: null,
      offset_err_deg: null,
      created_by: null,
    } as never);
    const job = await models.ReductionJob.create({
      scan_id: scan.id,
      calibration_id: c.calibrationId,
      settings_id: c.settingsId,
      batch_id: null,
      requested_by: null,
      queue_job_id: null,
      error_message: null,
      started_at: null,
      finished_at: null,
    } as never);
    await processReduction(
      { scanId: scan.id, calibrationId: c.calibrationId, settingsId: c.settingsId, reductionJobId: job.id },
      { attemptsMade: 0, maxAttempts: 1, updateProgress: async () => undefined },
    );
    const row = await models.Scan.findByPk(scan.id);
    const result = await models.ScanResult.findByPk(row?.latest_result_id ?? 0);
    if (!result) throw new Error(`${f.fileName} was not reduced: ${row?.status_message}`);
    reduced.push({
      fileName: f.fileName,
      kind: o.kind,
      scanId: scan.id,
      resultId: result.id,
      nSteps: meta.shape.nStep,
      bucket: result.derived_bucket!,
      key: result.derived_key!,
    });
  }
}, 600_000);

afterAll(async () => {
  clearSession();
  await world?.cleanup();
  await closeReductionQueue();
  closeS3Client();
  await closeSequelize();
  rmSync(work, { recursive: true, force: true });
});

describe('demo scans', () => {
  it('a result id seen in another database does not serve that database’s result file', async () => {
    const streaking = reduced.find((r) => r.kind === 'angular_streaking')!;
    const phase = reduced.find((r) => r.kind === 'two_color_phase')!;
    // An id far above this database's ids, as another database on the machine would have used it.
    const sharedId = 900_000_000 + (Number.parseInt(world.run, 16) % 1_000_000);
    const other = await readResultImage({
      resultId: sharedId,
      bucket: streaking.bucket,
      key: streaking.key,
      kind: 'calibrated',
      step: 0,
      maxSide: 64,
    });
    expect(other.kind).toBe('calibrated');
    const map = await readResultImage({
      resultId: sharedId,
      bucket: phase.bucket,
      key: phase.key,
      kind: 'phase_of_max',
      step: 0,
      maxSide: 64,
    });
    expect(map.kind).toBe('phase_of_max');
    expect(map.units).toBe('rad');
  });

  it('every view of every demo scan loads', async () => {
    expect(reduced.map((r) => r.fileName).sort()).toEqual(
      DEMO_FILES.filter((f) => !f.broken)
        .map((f) => f.fileName)
        .sort(),
    );
    actAs(world.users.analyst);
    for (const r of reduced) {
      const at = (p: string) => `/api/scans/${r.scanId}/${p}`;
      const params = { scanId: String(r.scanId) };
      for (let step = 0; step < r.nSteps; step++) {
        const img = await callRoute(imageRoute.GET, {
          method: 'GET',
          path: at('image'),
          params,
          query: { kind: 'calibrated', step },
        });
        expect(img.status, `${r.fileName} image step ${step}: ${JSON.stringify(img.json)}`).toBe(200);
        expect((img.json as { max: number }).max, `${r.fileName} step ${step} has counts`).toBeGreaterThan(0);
        const curves = await callRoute(curvesRoute.GET, { method: 'GET', path: at('curves'), params, query: { step } });
        expect(curves.status, `${r.fileName} curves step ${step}: ${JSON.stringify(curves.json)}`).toBe(200);
        expect((curves.json as { angular: number[] }).angular.length).toBeGreaterThan(0);
      }
      if (r.kind !== 'two_color_phase') continue;
      for (const kind of ['mean', 'amplitude', 'phase_of_max', 'contrast']) {
        const map = await callRoute(imageRoute.GET, { method: 'GET', path: at('image'), params, query: { kind } });
        expect(map.status, `${r.fileName} map ${kind}: ${JSON.stringify(map.json)}`).toBe(200);
        const body = map.json as { nx: number; ny: number; min: number; max: number };
        expect(body.nx * body.ny).toBeGreaterThan(0);
        expect(Number.isFinite(body.min) && Number.isFinite(body.max)).toBe(true);
      }
      const region = await callRoute(regionRoute.GET, {
        method: 'GET',
        path: at('region'),
        params,
        query: { px0: 0.2, px1: 0.8, py0: -0.3, py1: 0.3 },
      });
      expect(region.status, `${r.fileName} region: ${JSON.stringify(region.json)}`).toBe(200);
      const yields = (region.json as { yields: number[] }).yields;
      expect(yields).toHaveLength(r.nSteps);
      expect(yields.some((y) => y > 0)).toBe(true);
    }
  });
});
