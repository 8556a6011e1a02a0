// Large event files split into chunk jobs (lib/queue/event-flow.ts) through the real MariaDB, Redis and S3 of the
// test services: chunk workers in child processes are killed with SIGKILL, one in the middle of a chunk and one after
// storing its part but before BullMQ heard the chunk was done; BullMQ's stalled-job check gives both chunks to the
// worker left, and the merged result must equal a single pass over the file exactly (no chunk counted twice or
// missed). Then a 10⁷-event file is reduced by two worker processes (scripts/worker.ts) sharing its chunks.
//
// Truth:
// - the single-pass reduction of the same file in this process (runEventReduction, lib/jobs/engine.ts): the merged
//   histogram must give the same result JSON and the same calibrated counts, compared with equality (integer counts
//   are exact in float64, IEEE 754: common practice);
// - the generator's events per step and true offsets (reduction/synth/event-file.ts, known by construction); the
//   offset check is |measured − true| ≤ 3 σ_bootstrap + 0.3° as in worker.test.ts (a Gaussian 3σ band fails by chance
//   in 0.3 % of steps, common practice; the 0.3° for angular binning and smoothing is ours);
// - the spectrometer values of the calibration version override the file's (FORMATS §2 extension `spectrometer`):
//   the file states a wrong t₀ (rewritten with Debian's h5py), the result must record and use the calibration's.
import { type ChildProcess, execFileSync, spawn } from 'node:child_process';
import { createHash, randomBytes } from 'node:crypto';
import { mkdtempSync, readFileSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';

vi.mock('server-only', () => ({}));

process.env.EVENT_SPLIT_EVENTS = '200000';
process.env.EVENT_CHUNK_JOB_EVENTS = '150000';
const { resetEnvCache } = await import('@/lib/env');
resetEnvCache();

const { getDb } = await import('@/lib/db');
const { closeSequelize } = await import('@/lib/db/client');
const { startReductionWorker } = await import('@/lib/jobs/worker');
const { startEventChunkWorker } = await import('@/lib/jobs/event-chunk');
const { runEventReduction } = await import('@/lib/jobs/engine');
const { enqueueReductionForScan } = await import('@/lib/queue/enqueue');
const { closeReductionQueue, getReductionQueue, reductionJobId } = await import('@/lib/queue/reduction-queue');
const { releaseLease, SWEEP_LEASE, sweepLostReductions } = await import('@/lib/jobs/sweep');
const { getScanDetail } = await import('@/lib/db/queries/scans');
const { closeEventFlow, EVENT_CHUNK_QUEUE } = await import('@/lib/queue/event-flow');
const { createRedisConnection } = await import('@/lib/queue/connection');
const { Queue } = await import('bullmq');
const { buckets, closeS3Client, getObjectStream, putObject } = await import('@/lib/storage/s3');
const models = await import('@/models');
const { parseAnyCalibration, analysisSettingsSchema } = await import('@/reduction/formats');
const { parseVersionBody } = await import('@/lib/db/queries/calibrations');
type DetectorCalibration = import('@/reduction/formats').DetectorCalibration;
const { loadH5wasmNode, openScanOrEventsPath } = await import('@/reduction/hdf5/node');
const { planScan } = await import('@/reduction/synth/model');
const { writeSynthEventScan, DEFAULT_EVENT_FILE_OPTIONS } = await import('@/reduction/synth/event-file');
const { rawFileRow } = await import('./helpers/rows');

const REPO = path.resolve(import.meta.dirname, '../..');
const tag = randomBytes(3).toString('hex');
const work = mkdtempSync(path.join(tmpdir(), `lobeline-event-flow-${tag}-`));
const TRUE_T0_NS = DEFAULT_EVENT_FILE_OPTIONS.spectrometer.t0_ns;
const SETTINGS = {
  bootstrap: { resamples: 30, seed: 5 },
  grid: { p_max_au: 2.0, n: 121 },
  events: { laser_axis: '+y', gate_au: { axis: 'laser', range: [-0.15, 0.15] }, chunk_events: 20_000 },
};
const world = { teamId: 0, teamSlug: '', campaignId: 0, shiftId: 0, calibrationId: 0, settingsId: 0 };
const children: ChildProcess[] = [];

beforeAll(async () => {
  getDb();
  const team = await models.Team.create({ slug: `ef-${tag}`, name: `Event flow ${tag}`, description: null });
  const campaign = await models.Campaign.create({
    team_id: team.id,
    name: `Event flow campaign ${tag}`,
    target: 'He',
    wavelength_nm: 800,
    experiment_kind: 'angular_streaking',
    description: null,
    created_by: null,
    current_calibration_id: null,
    current_settings_id: null,
    embargo_until: null,
  });
  const op = await models.User.create({
    email: `op-${tag}@event-flow.example`,
    name: 'Event Operator',
    password_hash: null,
    notification_prefs: null,
    last_sign_in_at: null,
  });
  await models.Membership.create({ user_id: op.id, team_id: team.id, role: 'operator' });
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
  // an event campaign's calibration: the spectrometer values only (no detector-image fields)
  const cal = await models.DetectorCalibrationVersion.create({
    campaign_id: campaign.id,
    version: 1,
    body: parseVersionBody('calibration', { spectrometer: { t0: TRUE_T0_NS } }) as DetectorCalibration,
    note: 't₀ from the timing calibration',
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
  Object.assign(world, {
    teamId: team.id,
    teamSlug: team.slug,
    campaignId: campaign.id,
    shiftId: shift.id,
    calibrationId: cal.id,
    settingsId: set.id,
  });
});

afterAll(async () => {
  for (const c of children) if (c.exitCode === null && c.signalCode === null) c.kill('SIGKILL');
  await closeEventFlow();
  await closeReductionQueue();
  closeS3Client();
  await closeSequelize();
  rmSync(work, { recursive: true, force: true });
});

/** An event file with a wrong t₀ in it, stored in S3 with its raw_files and scans rows (as the ingest would). */
async function addEventScan(name: string, plan: ReturnType<typeof planScan>) {
  const rt = await loadH5wasmNode();
  const file = path.join(work, `${name}.h5`);
  const truth = writeSynthEventScan(rt, file, plan, { dtype: 'float32' });
  execFileSync('/usr/bin/python3', [
    '-c',
    'import sys, h5py\nf = h5py.File(sys.argv[1], "a")\nf["entry/instrument/spectrometer/t0"][()] = 3.0\nf.close()',
    file,
  ]);
  const bytes = readFileSync(file);
  const sha256 = createHash('sha256').update(bytes).digest('hex');
  const key = `raw/${world.teamSlug}/${sha256}.h5`;
  await putObject({ bucket: buckets().raw, key, body: bytes, contentLength: bytes.length });
  const raw = await models.RawFile.create(
    rawFileRow(world.teamId, { sha256, storage_key: key, size_bytes: bytes.length, original_name: `${name}.h5` }),
  );
  const scan = await models.Scan.create({
    team_id: world.teamId,
    campaign_id: world.campaignId,
    shift_id: world.shiftId,
    raw_file_id: raw.id,
    experiment_kind: 'angular_streaking',
    title: name,
    target: plan.options.target,
    wavelength_nm: plan.options.wavelengthNm,
    ellipticity: plan.options.ellipticity,
    helicity: plan.options.helicity,
    step_quantity: plan.stepQuantity,
    n_steps: plan.steps.length,
    n_y: null,
    n_x: null,
    started_at: new Date(),
    status: 'uploaded',
    status_message: null,
    flag_note: null,
    latest_result_id: null,
    offset_deg: null,
    offset_err_deg: null,
    created_by: null,
  });
  return { scanId: scan.id, file, truth, bytes: bytes.length };
}

async function waitForJob(id: number, timeoutMs: number) {
  const deadline = Date.now() + timeoutMs;
  for (;;) {
    const row = await models.ReductionJob.findByPk(id);
    if (row && (row.status === 'succeeded' || row.status === 'failed')) return row;
    if (Date.now() > deadline) throw new Error(`job ${id} still ${row?.status} after ${timeoutMs} ms`);
    await new Promise((r) => setTimeout(r, 200));
  }
}

function spawnChild(args: string[], env: Record<string, string>): { child: ChildProcess; out: () => string } {
  const child = spawn(process.execPath, ['--import', 'tsx', ...args], {
    cwd: REPO,
    env: { ...process.env, LOG_LEVEL: 'warn', ...env },
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  children.push(child);
  let text = '';
  child.stdout?.on('data', (d) => (text += String(d)));
  child.stderr?.on('data', (d) => (text += String(d)));
  return { child, out: () => text };
}

async function until(what: string, test: () => boolean, timeoutMs: number, log: () => string) {
  const deadline = Date.now() + timeoutMs;
  while (!test()) {
    if (Date.now() > deadline) throw new Error(`${what} did not happen within ${timeoutMs} ms:\n${log()}`);
    await new Promise((r) => setTimeout(r, 100));
  }
}

/** The merged result against a single pass over the same local file, in this process. */
async function expectSinglePassEquality(file: string, resultId: number, dir: string) {
  const rt = await loadH5wasmNode();
  const cal = await models.DetectorCalibrationVersion.findByPk(world.calibrationId);
  const parsed = parseAnyCalibration(cal!.body);
  if (!parsed.ok) throw new Error(parsed.problems.join('; '));
  const calibration = parsed.value;
  expect(calibration.center_px).toBeUndefined(); // an event calibration: no detector-image fields
  const settings = analysisSettingsSchema.parse(SETTINGS);
  const opened = await openScanOrEventsPath(file, { spectrometer: calibration.spectrometer ?? null });
  if (!opened.ok || opened.kind !== 'events') throw new Error('the test file does not open as an event file');
  const singlePath = path.join(dir, `single-${resultId}.h5`);
  let single: Awaited<ReturnType<typeof runEventReduction>>;
  try {
    single = await runEventReduction({
      scan: opened.scan,
      calibration,
      settings,
      sha256: null,
      outPath: singlePath,
      readerWarnings: opened.warnings,
    });
  } finally {
    opened.scan.close();
  }
  const stored = await models.ScanResult.findByPk(resultId);
  const json = stored!.result_json;
  const plain = <T>(v: T): T => JSON.parse(JSON.stringify(v));
  expect(json.steps).toEqual(plain(single.result.steps));
  expect(json.events).toEqual(plain(single.result.events));
  expect(json.warnings).toEqual(plain(single.result.warnings));
  // the calibrated counts of the derived result file, cell by cell
  const { body } = await getObjectStream(stored!.derived_bucket!, stored!.derived_key!);
  const chunks: Buffer[] = [];
  for await (const c of body) chunks.push(c as Buffer);
  const mergedPath = path.join(dir, `merged-${resultId}.h5`);
  writeFileSync(mergedPath, Buffer.concat(chunks));
  const read = (p: string) => {
    const f = new rt.File(p, 'r');
    try {
      return Float32Array.from(
        (f.get('entry/result/calibrated/counts') as InstanceType<typeof rt.Dataset>).value as Float32Array,
      );
    } finally {
      f.close();
    }
  };
  expect(read(mergedPath)).toEqual(read(singlePath));
  return json;
}

function expectTruth(
  json: { steps: { index: number; offset_deg: number | null; offset_err_deg: number | null }[] },
  truth: ReturnType<typeof writeSynthEventScan>,
) {
  for (const step of json.steps) {
    const t = truth.steps[step.index]!;
    expect(step.offset_err_deg).toBeGreaterThan(0);
    expect(
      Math.abs((step.offset_deg ?? Number.NaN) - (t.offset_deg ?? Number.NaN)),
      `step ${step.index}: ${step.offset_deg} ± ${step.offset_err_deg}`,
    ).toBeLessThanOrEqual(3 * (step.offset_err_deg ?? 0) + 0.3);
  }
}

describe('chunk workers killed with SIGKILL', () => {
  it('have their chunks redone by the worker left, and the merge equals one pass exactly', async () => {
    const plan = planScan({ kind: 'angular_streaking', steps: 3, size: 96, counts: 2.2e5, seed: 41, offsetDeg: 5 });
    const { scanId, file, truth } = await addEventScan('kill-test', plan);
    const nEvents = truth.events_per_step.reduce((a, b) => a + b, 0);
    expect(nEvents).toBeGreaterThan(200_000); // above EVENT_SPLIT_EVENTS: split
    const helper = path.join(REPO, 'tests/integration/helpers/chunk-worker-child.ts');
    const mid = spawnChild([helper], { HANG_AT: 'events' });
    const after = spawnChild([helper], { HANG_AT: 'stored' });
    await until(
      'both chunk workers ready',
      () => mid.out().includes('READY') && after.out().includes('READY'),
      60_000,
      () => mid.out() + after.out(),
    );

    // plans and later merges; counts no chunk itself
    const reducer = startReductionWorker({ name: `flow-reducer-${tag}`, sweep: false });
    let chunker: ReturnType<typeof startEventChunkWorker> | null = null;
    try {
      const o = await enqueueReductionForScan(scanId);
      if (!o.queued) throw new Error(o.reason);
      await until(
        'a chunk worker stopped mid-chunk',
        () => mid.out().includes('HUNG'),
        90_000,
        () => mid.out(),
      );
      await until(
        'a chunk worker stopped after storing',
        () => after.out().includes('HUNG'),
        90_000,
        () => after.out(),
      );
      const row = await models.ReductionJob.findByPk(o.reductionJobId);
      const total = row!.chunks_total!;
      expect(total).toBe(
        Math.ceil(truth.events_per_step[0]! / 150_000) +
          Math.ceil(truth.events_per_step[1]! / 150_000) +
          Math.ceil(truth.events_per_step[2]! / 150_000),
      );
      expect(row!.queue_job_id).toContain('-merge-');
      // the part stored before the kill already counts towards the progress
      expect(row!.chunks_done).toBe(1);
      expect(row!.status).toBe('running');
      // what the scan page shows ("1 of N event chunks counted")
      const detail = await getScanDetail({ scanId });
      const open = detail.jobs.find((j) => j.status === 'running');
      expect(open?.chunksDone).toBe(1);
      expect(open?.chunksTotal).toBe(total);
      expect(open?.progress).toBeCloseTo(0.05 + 0.85 / total, 5);
      mid.child.kill('SIGKILL');
      after.child.kill('SIGKILL');
      await Promise.all(
        [mid.child, after.child].map(
          (c) => new Promise((r) => (c.exitCode !== null || c.signalCode !== null ? r(null) : c.once('exit', r))),
        ),
      );

      chunker = startEventChunkWorker({ name: `flow-chunker-${tag}` });
      const done = await waitForJob(o.reductionJobId, 180_000);
      expect(done.status, done.error_message ?? '').toBe('succeeded');
      expect(done.chunks_done).toBe(total);
      // exactly one chunk ran twice (the one whose part was stored before the kill); it was overwritten, not added
      expect(done.chunks_redone).toBe(1);
      const scan = await models.Scan.findByPk(scanId);
      expect(scan?.status).toBe('reduced');
      expect(await models.ScanResult.count({ where: { scan_id: scanId } })).toBe(1);
      const json = await expectSinglePassEquality(file, scan!.latest_result_id!, work);
      expect(json.events?.n_events).toBe(nEvents);
      expect(json.events?.steps.map((s: { events: number }) => s.events)).toEqual(truth.events_per_step);
      expect(json.events?.spectrometer.t0_ns).toBe(TRUE_T0_NS);
      expect(json.events?.spectrometer_source.t0).toBe('calibration');
      expectTruth(json, truth);
      // the parts are gone once the result is committed
      const [left] = (await getDb().query('SELECT COUNT(*) AS n FROM event_chunk_parts WHERE reduction_job_id = ?', {
        replacements: [o.reductionJobId],
      })) as [{ n: number }[], unknown];
      expect(Number(left[0]?.n)).toBe(0);
    } finally {
      await chunker?.close();
      await reducer.close();
    }
  }, 400_000);
});

describe('a 10⁷-event file', () => {
  it('is reduced through the real queue by two worker processes to the generator’s truth', async () => {
    const t0 = Date.now();
    // 2 steps of 5×10⁶ events: above EVENT_SPLIT_EVENTS; the workers cut chunk jobs of 10⁶ events (10 chunks)
    const plan = planScan({ kind: 'angular_streaking', steps: 2, size: 128, counts: 5e6, seed: 43, offsetDeg: 4 });
    const { scanId, file, truth, bytes } = await addEventScan('ten-million', plan);
    const tGenerated = Date.now();
    const nEvents = truth.events_per_step.reduce((a, b) => a + b, 0);
    expect(nEvents).toBeGreaterThan(0.95e7);
    const workers = [0, 1].map(() =>
      spawnChild([path.join(REPO, 'scripts/worker.ts')], { EVENT_CHUNK_JOB_EVENTS: '1000000' }),
    );
    for (const w of workers) await until('worker ready', () => w.out().includes('waiting for jobs'), 60_000, w.out);
    const o = await enqueueReductionForScan(scanId);
    if (!o.queued) throw new Error(o.reason);
    // which worker processes count chunks (BullMQ's processedBy of the active chunk jobs, sampled while they run)
    const chunkQueue = new Queue(EVENT_CHUNK_QUEUE, { connection: createRedisConnection('test-chunk-watch') });
    const seen = new Set<string>();
    let watching = true;
    const watch = (async () => {
      while (watching) {
        for (const j of await chunkQueue.getActive()) if (j.processedBy) seen.add(j.processedBy);
        await new Promise((r) => setTimeout(r, 40));
      }
    })();
    const done = await waitForJob(o.reductionJobId, 400_000).finally(() => {
      watching = false;
    });
    await watch;
    await chunkQueue.close();
    const tReduced = Date.now();
    // both processes took chunks (each names itself host:pid, scripts/worker.ts)
    expect(seen.size, [...seen].join(', ')).toBe(2);
    for (const w of workers) expect([...seen].some((n) => n.endsWith(`:${w.child.pid}`))).toBe(true);
    expect(done.status, `${done.error_message}\n${workers.map((w) => w.out()).join('\n')}`).toBe('succeeded');
    expect(done.chunks_total).toBe(truth.events_per_step.reduce((a, n) => a + Math.ceil(n / 1e6), 0));
    expect(done.chunks_done).toBe(done.chunks_total);
    expect(done.chunks_redone).toBe(0);
    // stopped cleanly (each gives its sweep lease up, which the next test needs)
    await Promise.all(
      workers.map(
        (w) =>
          new Promise((r) => {
            if (w.child.exitCode !== null) return r(null);
            w.child.once('exit', r);
            w.child.kill('SIGTERM');
          }),
      ),
    );
    const scan = await models.Scan.findByPk(scanId);
    const json = await expectSinglePassEquality(file, scan!.latest_result_id!, work);
    expect(json.events?.n_events).toBe(nEvents);
    expect(json.events?.steps.map((s: { events: number }) => s.events)).toEqual(truth.events_per_step);
    expect(json.events?.spectrometer_source.t0).toBe('calibration');
    expectTruth(json, truth);
    console.log(
      `10⁷-event file (${(bytes / 2 ** 20).toFixed(0)} MiB, ${nEvents} events, ${done.chunks_total} chunks): ` +
        `generated in ${((tGenerated - t0) / 1000).toFixed(1)} s, reduced by two worker processes in ` +
        `${((tReduced - tGenerated) / 1000).toFixed(1)} s (from worker start to committed result)`,
    );
    expect(statSync(file).size).toBe(bytes);
  }, 900_000);
});

describe('a split request whose merge job the queue lost', () => {
  it('is planned again by the lost-job sweep under its own id and reduced once', async () => {
    const plan = planScan({ kind: 'angular_streaking', steps: 2, size: 64, counts: 1.2e5, seed: 47, offsetDeg: 3 });
    const { scanId, truth } = await addEventScan('lost-merge', plan);
    const base = reductionJobId(scanId, world.calibrationId, world.settingsId);
    // as a planner leaves it: running, split, pointing at a merge job that Redis no longer holds (e.g. a restart)
    const row = await models.ReductionJob.create({
      scan_id: scanId,
      calibration_id: world.calibrationId,
      settings_id: world.settingsId,
      batch_id: null,
      status: 'running',
      attempts: 1,
      error_message: null,
      queue_job_id: `${base}-merge-r999999`,
      requested_by: null,
      started_at: new Date(),
      finished_at: null,
      chunks_total: 2,
      chunks_done: 0,
    });
    // The sweep lease may still name a worker another test file killed (it expires after 90 s): take it over, as
    // an expired lease would be; a live sweeper that gets there first re-queues the row in the same way.
    for (let i = 0; i < 50; i++) {
      await getDb().query("UPDATE worker_leases SET holder = NULL WHERE name = 'reduction-sweep'");
      const report = await sweepLostReductions({ holder: `sweep-test-${tag}`, minAgeMs: 0 });
      await row.reload();
      if (report.leased && row.queue_job_id === base) expect(report.requeued).toContain(row.id);
      if (row.queue_job_id === base) break;
      await new Promise((r) => setTimeout(r, 200));
    }
    expect(row.queue_job_id).toBe(base);
    expect(await getReductionQueue().getJob(base)).toBeTruthy();
    const reducer = startReductionWorker({ name: `sweep-reducer-${tag}`, sweep: false });
    const chunker = startEventChunkWorker({ name: `sweep-chunker-${tag}` });
    try {
      const done = await waitForJob(row.id, 180_000);
      expect(done.status, done.error_message ?? '').toBe('succeeded');
      expect(done.chunks_total).toBe(done.chunks_done);
      expect(done.queue_job_id).toContain('-merge-');
    } finally {
      await chunker.close();
      await reducer.close();
      // give the lease up, or the next test file's sweeps wait 90 s for it
      await releaseLease(SWEEP_LEASE, `sweep-test-${tag}`);
    }
    expect(await models.ScanResult.count({ where: { scan_id: scanId } })).toBe(1);
    const result = await models.ScanResult.findOne({ where: { scan_id: scanId } });
    expect(result!.result_json.events?.steps.map((s: { events: number }) => s.events)).toEqual(truth.events_per_step);
  }, 300_000);
});

describe('a chunk that cannot be counted', () => {
  it('fails the request with a sentence naming the chunk, and nothing is merged', async () => {
    const plan = planScan({ kind: 'angular_streaking', steps: 2, size: 64, counts: 1.2e5, seed: 53, offsetDeg: 3 });
    const { scanId } = await addEventScan('gone-file', plan);
    const reducer = startReductionWorker({ name: `fail-reducer-${tag}`, sweep: false });
    let chunker: ReturnType<typeof startEventChunkWorker> | null = null;
    try {
      const o = await enqueueReductionForScan(scanId);
      if (!o.queued) throw new Error(o.reason);
      const deadline = Date.now() + 60_000;
      for (;;) {
        const row = await models.ReductionJob.findByPk(o.reductionJobId);
        if (row?.chunks_total) break;
        if (row?.status === 'failed' || Date.now() > deadline) throw new Error(`not split: ${row?.status}`);
        await new Promise((r) => setTimeout(r, 100));
      }
      // the raw file goes away after the plan: a permanent problem, no retry (lib/jobs/failure.ts)
      const scan = await models.Scan.findByPk(scanId);
      await models.RawFile.update({ deleted_at: new Date() }, { where: { id: scan!.raw_file_id } });
      chunker = startEventChunkWorker({ name: `fail-chunker-${tag}` });
      const done = await waitForJob(o.reductionJobId, 60_000);
      expect(done.status).toBe('failed');
      expect(done.error_message).toMatch(/^Chunk \d+ of \d+: The raw file of this scan is no longer stored\./);
      expect((await models.Scan.findByPk(scanId))?.status).toBe('failed');
      expect(await models.ScanResult.count({ where: { scan_id: scanId } })).toBe(0);
    } finally {
      await chunker?.close();
      await reducer.close();
    }
  }, 120_000);
});
