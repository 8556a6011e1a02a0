// Event files (FORMATS §1.1) end to end through the real S3, MariaDB and Redis of the test services: an operator
// uploads a generated event file of about 10⁶ events through the upload routes, the server-side check reads every
// event in chunks and the catalogue accepts the file, the accepted scan is queued on the real reduction queue, and
// a worker in this process reduces it. The calibration version overrides the file's t₀ (the file states a wrong one,
// rewritten with Debian's h5py) and must be the value used.
//
// Truth: the generator's (reduction/synth/event-file.ts) true offsets, known by construction; the check is
// |measured − true| ≤ 3 σ_bootstrap + 0.3° as in worker.test.ts (0.3° is ours, for the angular binning and smoothing).
import { execFileSync } from 'node:child_process';
import { createHash, randomBytes } from 'node:crypto';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';

vi.mock('server-only', () => ({}));

const { POST: startPOST } = await import('@/app/api/uploads/route');
const { POST: completePOST } = await import('@/app/api/uploads/[uploadId]/complete/route');
const { GET: uploadGET } = await import('@/app/api/uploads/[uploadId]/route');
const verifyJobs = await import('@/lib/jobs/verify-upload');
const { setSessionSourceForTests } = await import('@/lib/auth/session-source');
const { getDb, closeSequelize } = await import('@/lib/db');
const { startReductionWorker } = await import('@/lib/jobs/worker');
const { closeReductionQueue } = await import('@/lib/queue/reduction-queue');
const { closeQueueConnections } = await import('@/lib/queue/connection');
const s3 = await import('@/lib/storage/s3');
const models = await import('@/models');
const { loadH5wasmNode } = await import('@/reduction/hdf5/node');
const { detectorCalibrationSchema } = await import('@/reduction/formats');
const { planScan } = await import('@/reduction/synth/model');
const { writeSynthEventScan, DEFAULT_EVENT_FILE_OPTIONS } = await import('@/reduction/synth/event-file');

const run = randomBytes(3).toString('hex');
const dir = mkdtempSync(path.join(tmpdir(), 'lobeline-events-test-'));
const ids = { team: 0, operator: 0, campaign: 0, shift: 0, calibration: 0, settings: 0 };
const TRUE_T0_NS = DEFAULT_EVENT_FILE_OPTIONS.spectrometer.t0_ns;
const SETTINGS = {
  bootstrap: { resamples: 40, seed: 7 },
  grid: { p_max_au: 2.0, n: 201 },
  events: { laser_axis: '+y', gate_au: { axis: 'laser', range: [-0.15, 0.15] }, chunk_events: 250_000 },
};

type Handler = (req: Request, ctx?: { params: Promise<Record<string, string>> }) => Promise<Response>;
async function call(
  handler: Handler,
  opts: { method?: string; body?: unknown; params?: Record<string, string | number> } = {},
) {
  const params = Object.fromEntries(Object.entries(opts.params ?? {}).map(([k, v]) => [k, String(v)]));
  const req = new Request('http://127.0.0.1:3100/api/x', {
    method: opts.method ?? 'POST',
    headers: { 'content-type': 'application/json' },
    body: opts.body === undefined ? undefined : JSON.stringify(opts.body),
  });
  const res = await handler(req, { params: Promise.resolve(params) });
  // biome-ignore lint/suspicious/noExplicitAny: test helper reads arbitrary JSON answers
  return { status: res.status, json: (await res.json()) as any };
}

beforeAll(async () => {
  getDb();
  const team = await models.Team.create({ slug: `ev-${run}`, name: `Event team ${run}`, description: null });
  const op = await models.User.create({
    email: `op-${run}@ev.example`,
    name: 'Event Operator',
    password_hash: null,
    notification_prefs: null,
    last_sign_in_at: null,
  });
  await models.Membership.create({ user_id: op.id, team_id: team.id, role: 'operator' });
  const campaign = await models.Campaign.create({
    team_id: team.id,
    name: `He 800 nm events ${run}`,
    target: 'He',
    wavelength_nm: 800,
    experiment_kind: 'angular_streaking',
    description: null,
    created_by: null,
    current_calibration_id: null,
    current_settings_id: null,
    embargo_until: null,
  });
  const shift = await models.Shift.create({
    team_id: team.id,
    campaign_id: campaign.id,
    title: 'Event shift',
    opened_by: op.id,
    opened_at: new Date(),
    closed_by: null,
    closed_at: null,
    receipt_sent_at: null,
  });
  const approved = { status: 'approved' as const, created_by: null, approved_by: null, approved_at: new Date() };
  const cal = await models.DetectorCalibrationVersion.create({
    campaign_id: campaign.id,
    version: 1,
    body: detectorCalibrationSchema.parse({
      center_px: [0, 0],
      momentum_per_pixel_au: 1,
      spectrometer: { t0: TRUE_T0_NS },
    }),
    note: 't0 from the timing calibration',
    locked_at: null,
    ...approved,
  });
  const set = await models.AnalysisSettingsVersion.create({
    campaign_id: campaign.id,
    version: 1,
    body: SETTINGS as unknown as InstanceType<typeof models.AnalysisSettingsVersion>['body'],
    note: null,
    locked_at: null,
    ...approved,
  });
  await campaign.update({ current_calibration_id: cal.id, current_settings_id: set.id });
  Object.assign(ids, {
    team: team.id,
    operator: op.id,
    campaign: campaign.id,
    shift: shift.id,
    calibration: cal.id,
    settings: set.id,
  });
  setSessionSourceForTests(async () => ({ userId: ids.operator }));
});

afterAll(async () => {
  setSessionSourceForTests(null);
  await closeReductionQueue();
  await verifyJobs.closeUploadVerifyQueue();
  await closeQueueConnections();
  s3.closeS3Client();
  await closeSequelize();
  rmSync(dir, { recursive: true, force: true });
});

async function waitForResult(scanId: number, timeoutMs = 240_000) {
  const deadline = Date.now() + timeoutMs;
  for (;;) {
    const job = await models.ReductionJob.findOne({ where: { scan_id: scanId }, order: [['id', 'DESC']] });
    if (job && (job.status === 'succeeded' || job.status === 'failed')) return job;
    if (Date.now() > deadline)
      throw new Error(`reduction of scan ${scanId} still ${job?.status} after ${timeoutMs} ms`);
    await new Promise((r) => setTimeout(r, 250));
  }
}

describe('an event file of about 10⁶ events', () => {
  it('is uploaded, checked, catalogued and reduced through the real queue to the generator’s truth', async () => {
    const rt = await loadH5wasmNode();
    const file = path.join(dir, 'events-1e6.h5');
    const plan = planScan({ kind: 'angular_streaking', steps: 3, size: 128, counts: 3.3e5, seed: 23, offsetDeg: 6 });
    const truth = writeSynthEventScan(rt, file, plan, { dtype: 'float32' });
    const nEvents = truth.events_per_step.reduce((a, b) => a + b, 0);
    expect(nEvents).toBeGreaterThan(0.95e6);
    // the file states a wrong t₀ (3 ns); the calibration's value must be the one used
    execFileSync('/usr/bin/python3', [
      '-c',
      'import sys, h5py\nf = h5py.File(sys.argv[1], "a")\nf["entry/instrument/spectrometer/t0"][()] = 3.0\nf.close()',
      file,
    ]);
    const bytes = new Uint8Array(readFileSync(file));

    const worker = startReductionWorker({ name: `events-worker-${run}` });
    // above the inline limit, the upload is verified by the upload-verify worker (the server-side check)
    const verifier = verifyJobs.startUploadVerifyWorker({ name: `events-verify-${run}` });
    try {
      const start = await call(startPOST, {
        body: {
          shiftId: ids.shift,
          fileName: 'events-1e6.h5',
          sizeBytes: bytes.length,
          lastModifiedMs: 1_700_000_000_000,
        },
      });
      expect(start.status, JSON.stringify(start.json)).toBeLessThan(300);
      expect(start.json.mode).toBe('single');
      const put = await fetch(start.json.url, { method: 'PUT', body: Buffer.from(bytes) });
      expect(put.status).toBe(200);
      const sha = createHash('sha256').update(bytes).digest('hex');
      const completed = await call(completePOST, { params: { uploadId: start.json.uploadId }, body: { sha256: sha } });
      expect(completed.status, JSON.stringify(completed.json)).toBeLessThan(300);
      let done = completed;
      for (let i = 0; i < 600 && done.json.state !== 'done'; i++) {
        await new Promise((r) => setTimeout(r, 200));
        done = await call(uploadGET, { method: 'GET', params: { uploadId: start.json.uploadId } });
      }
      expect(done.json.outcome, JSON.stringify(done.json)).toBe('accepted');

      // the catalogue: the raw file's metadata and the scan's columns
      const raw = await models.RawFile.findByPk(done.json.rawFileId);
      expect(raw?.status).toBe('accepted');
      const meta = raw?.metadata as { events?: { count: number; stepEvents: number[] } } | null;
      expect(meta?.events?.count).toBe(nEvents);
      expect(meta?.events?.stepEvents).toEqual(truth.events_per_step);
      const scan = await models.Scan.findByPk(done.json.scanId);
      expect(scan?.n_steps).toBe(3);
      expect(scan?.n_x).toBeNull(); // no detector image
      expect(scan?.experiment_kind).toBe('angular_streaking');

      // the accepted scan was queued; the worker reduces it
      const job = await waitForResult(done.json.scanId);
      expect(job.status, job.error_message ?? '').toBe('succeeded');
      const reduced = await models.Scan.findByPk(done.json.scanId);
      expect(reduced?.status).toBe('reduced');
      const result = await models.ScanResult.findByPk(reduced?.latest_result_id ?? 0);
      const json = result!.result_json;
      expect(json.steps).toHaveLength(3);
      for (const step of json.steps) {
        const t = truth.steps[step.index]!;
        expect(step.offset_err_deg).toBeGreaterThan(0);
        expect(
          Math.abs((step.offset_deg ?? Number.NaN) - (t.offset_deg ?? Number.NaN)),
          `step ${step.index}: ${step.offset_deg} ± ${step.offset_err_deg}`,
        ).toBeLessThanOrEqual(3 * (step.offset_err_deg ?? 0) + 0.3);
      }
      expect(json.events?.n_events).toBe(nEvents);
      expect(json.events?.spectrometer.t0_ns).toBe(TRUE_T0_NS);
      expect(json.events?.spectrometer_source.t0).toBe('calibration');
      expect(json.events?.chunk_events).toBe(250_000);
      expect(json.events?.steps.map((s: { events: number }) => s.events)).toEqual(truth.events_per_step);
      expect(await models.ScanResultStep.count({ where: { result_id: result!.id } })).toBe(3);
      const head = await s3.headObject(result!.derived_bucket ?? '', result!.derived_key ?? '');
      expect(head.size).toBeGreaterThan(1000);
    } finally {
      await verifier.close();
      await worker.close();
    }
  });
});
