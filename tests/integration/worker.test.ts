// Reduction worker through the real MariaDB, Redis and S3 of the test services (scripts/test.sh).
//
// Truth: scan files come from the project's forward model (reduction/synth), whose true offset angles are known by
// construction; the check is |measured − true| ≤ 3 σ_bootstrap + 0.3° (the 0.3° allows for the finite angular
// binning and smoothing of the default settings; a value of ours, not from a publication). Statistics: a Gaussian
// 3 σ band fails by chance in 0.3 % of steps (common practice).
import { type ChildProcess, spawn } from 'node:child_process';
import { createHash, randomBytes } from 'node:crypto';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { getDb } from '@/lib/db';
import { closeSequelize } from '@/lib/db/client';
import { startReductionWorker } from '@/lib/jobs/worker';
import { listCaughtMessages } from '@/lib/mail/catcher-store';
import { enqueueReductionForScan } from '@/lib/queue/enqueue';
import { closeReductionQueue, getReductionQueue, reductionJobId } from '@/lib/queue/reduction-queue';
import { buckets, closeS3Client, headObject, putObject } from '@/lib/storage/s3';
import {
  AnalysisSettingsVersion,
  Campaign,
  DetectorCalibrationVersion,
  Membership,
  RawFile,
  ReductionJob,
  Scan,
  ScanResult,
  ScanResultStep,
  Shift,
  Team,
  User,
} from '@/models';
import type { DetectorCalibration } from '@/reduction/formats';
import { loadH5wasmNode, openScanPath } from '@/reduction/hdf5/node';
import { planScan, type SynthOptions } from '@/reduction/synth/model';
import { type BrokenKind, breakBytes, type SynthTruth, writeSynthScan } from '@/reduction/synth/scan-file';
import { rawFileRow } from './helpers/rows';

const REPO = path.resolve(import.meta.dirname, '../..');
const tag = randomBytes(4).toString('hex');
const work = mkdtempSync(path.join(tmpdir(), `lobeline-worker-test-${tag}-`));

interface World {
  teamId: number;
  teamSlug: string;
  campaignId: number;
  shiftId: number;
  analystEmail: string;
  calibrationId: number;
  settingsId: number;
}
let world: World;

/** Small, fast scans: the default forward model on a 192-pixel detector, 60 bootstrap resamples. */
const BASE: Partial<SynthOptions> = { kind: 'angular_streaking', size: 192, steps: 3, counts: 1.5e5, offsetDeg: 6 };
const SETTINGS = { bootstrap: { resamples: 60, seed: 7 }, grid: { p_max_au: 2.0, n: 201 } };

async function createWorld(calibration: DetectorCalibration): Promise<World> {
  getDb();
  const team = await Team.create({ slug: `wk-${tag}`, name: `Worker test team ${tag}`, description: null });
  const analyst = await User.create({
    email: `analyst-${tag}@harbor-point.example`,
    name: 'Test Analyst',
    password_hash: null,
    notification_prefs: null,
    last_sign_in_at: null,
  });
  const operator = await User.create({
    email: `operator-${tag}@harbor-point.example`,
    name: 'Test Operator',
    password_hash: null,
    notification_prefs: null,
    last_sign_in_at: null,
  });
  await Membership.create({ user_id: analyst.id, team_id: team.id, role: 'analyst' });
  await Membership.create({ user_id: operator.id, team_id: team.id, role: 'operator' });
  const campaign = await Campaign.create({
    team_id: team.id,
    name: `He 800 nm worker test ${tag}`,
    target: 'He',
    wavelength_nm: 800,
    experiment_kind: 'angular_streaking',
    description: null,
    created_by: analyst.id,
    current_calibration_id: null,
    current_settings_id: null,
    embargo_until: null,
  });
  const shift = await Shift.create({
    team_id: team.id,
    campaign_id: campaign.id,
    title: 'Night shift',
    opened_by: operator.id,
    opened_at: new Date(),
    closed_by: null,
    closed_at: null,
    receipt_sent_at: null,
  });
  const cal = await DetectorCalibrationVersion.create({
    campaign_id: campaign.id,
    version: 1,
    body: calibration,
    note: 'from the generator',
    status: 'approved',
    created_by: analyst.id,
    approved_by: analyst.id,
    approved_at: new Date(),
    locked_at: null,
  });
  const set = await AnalysisSettingsVersion.create({
    campaign_id: campaign.id,
    version: 1,
    body: SETTINGS as unknown as AnalysisSettingsVersion['body'],
    note: null,
    status: 'approved',
    created_by: analyst.id,
    approved_by: analyst.id,
    approved_at: new Date(),
    locked_at: null,
  });
  await campaign.update({ current_calibration_id: cal.id, current_settings_id: set.id });
  return {
    teamId: team.id,
    teamSlug: team.slug,
    campaignId: campaign.id,
    shiftId: shift.id,
    analystEmail: analyst.email,
    calibrationId: cal.id,
    settingsId: set.id,
  };
}

/** Writes a synthetic scan, puts it into the raw bucket and creates its raw_files and scans rows (as the ingest would). */
async function addScan(
  options: Partial<SynthOptions>,
  broken: BrokenKind | null = null,
): Promise<{ scanId: number; truth: SynthTruth; plan: ReturnType<typeof planScan> }> {
  const rt = await loadH5wasmNode();
  const plan = planScan({ ...BASE, ...options });
  const file = path.join(work, `scan-${randomBytes(4).toString('hex')}.h5`);
  const truth = writeSynthScan(rt, file, plan, broken === 'truncated' || broken === 'not_hdf5' ? null : broken);
  let bytes: Uint8Array = new Uint8Array(readFileSync(file));
  if (broken === 'truncated' || broken === 'not_hdf5') bytes = breakBytes(bytes, broken);
  const sha256 = createHash('sha256').update(bytes).digest('hex');
  const key = `raw/${world.teamSlug}/${sha256}.h5`;
  await putObject({ bucket: buckets().raw, key, body: bytes, contentLength: bytes.length });
  const opened = broken ? null : await openScanPath(file);
  const meta = opened?.ok ? opened.scan.meta : null;
  if (opened?.ok) opened.scan.close();
  const raw = await RawFile.create(
    rawFileRow(world.teamId, {
      sha256,
      storage_key: key,
      size_bytes: bytes.length,
      original_name: path.basename(file),
      metadata: meta,
    }),
  );
  const scan = await Scan.create({
    team_id: world.teamId,
    campaign_id: world.campaignId,
    shift_id: world.shiftId,
    raw_file_id: raw.id,
    experiment_kind: plan.options.kind,
    title: `test scan ${raw.id}`,
    target: plan.options.target,
    wavelength_nm: plan.options.wavelengthNm,
    ellipticity: plan.options.ellipticity,
    helicity: plan.options.helicity,
    step_quantity: plan.stepQuantity,
    n_steps: plan.steps.length,
    n_y: plan.options.size,
    n_x: plan.options.size,
    started_at: new Date(),
    status: 'uploaded',
    status_message: null,
    flag_note: null,
    latest_result_id: null,
    offset_deg: null,
    offset_err_deg: null,
    created_by: null,
  });
  return { scanId: scan.id, truth, plan };
}

async function waitForJob(reductionJobId: number, timeoutMs = 90_000): Promise<ReductionJob> {
  const deadline = Date.now() + timeoutMs;
  for (;;) {
    const row = await ReductionJob.findByPk(reductionJobId);
    if (row && (row.status === 'succeeded' || row.status === 'failed')) return row;
    if (Date.now() > deadline) throw new Error(`job ${reductionJobId} still ${row?.status} after ${timeoutMs} ms`);
    await new Promise((r) => setTimeout(r, 150));
  }
}

function queued(o: Awaited<ReturnType<typeof enqueueReductionForScan>>) {
  if (!o.queued) throw new Error(`not queued: ${o.reason}`);
  return o;
}

beforeAll(async () => {
  const probe = planScan(BASE);
  world = await createWorld(probe.calibration);
});

afterAll(async () => {
  await closeReductionQueue();
  closeS3Client();
  await closeSequelize();
  rmSync(work, { recursive: true, force: true });
});

describe('a worker killed with SIGKILL in the middle of a job', () => {
  let child: ChildProcess | null = null;
  afterAll(() => {
    if (child && child.exitCode === null) child.kill('SIGKILL');
  });

  it('is recovered by another worker, with one result row and no half-written data', async () => {
    // A slower scan (more steps, more resamples) so that the kill lands inside the job.
    const { scanId } = await addScan({ steps: 10, size: 256, seed: 11 });
    child = spawn(process.execPath, ['--import', 'tsx', path.join(REPO, 'scripts/worker.ts')], {
      cwd: REPO,
      env: { ...process.env, LOG_LEVEL: 'warn' },
      stdio: ['ignore', 'pipe', 'pipe'],
    });
    let childOut = '';
    child.stdout?.on('data', (d) => (childOut += String(d)));
    child.stderr?.on('data', (d) => (childOut += String(d)));
    const o = queued(await enqueueReductionForScan(scanId));
    // Wait until the child has started the job and written some progress, then kill it without warning.
    const deadline = Date.now() + 60_000;
    for (;;) {
      const row = await ReductionJob.findByPk(o.reductionJobId);
      if (row?.status === 'running' && row.progress > 0.1) break;
      if (row?.status === 'succeeded' || row?.status === 'failed')
        throw new Error(`job ended before the kill: ${row.status}\n${childOut}`);
      if (Date.now() > deadline) throw new Error(`the child worker never got going:\n${childOut}`);
      await new Promise((r) => setTimeout(r, 50));
    }
    child.kill('SIGKILL');
    await new Promise((r) => child?.once('exit', r));
    expect(await ScanResult.count({ where: { scan_id: scanId } })).toBe(0);

    const second = startReductionWorker({ name: 'recovery-worker' });
    try {
      const done = await waitForJob(o.reductionJobId, 120_000);
      expect(done.status, done.error_message ?? '').toBe('succeeded');
      expect(done.attempts).toBeGreaterThanOrEqual(2);
    } finally {
      await second.close();
    }
    expect(await ScanResult.count({ where: { scan_id: scanId } })).toBe(1);
    const scan = await Scan.findByPk(scanId);
    expect(scan?.status).toBe('reduced');
    const result = await ScanResult.findByPk(scan?.latest_result_id ?? 0);
    expect(await ScanResultStep.count({ where: { result_id: result?.id ?? 0 } })).toBe(10);
  });
});

describe('reduction jobs with a worker in this process', () => {
  let worker: ReturnType<typeof startReductionWorker>;
  beforeAll(() => {
    worker = startReductionWorker({ name: 'test-worker' });
  });
  afterAll(async () => {
    await worker.close();
  });

  it('reduces a scan end to end: result offsets agree with the generator truth within their errors', async () => {
    const { scanId, truth } = await addScan({ seed: 3 });
    const o = queued(await enqueueReductionForScan(scanId));
    expect(o.queueJobId).toBe(reductionJobId(scanId, world.calibrationId, world.settingsId));
    const done = await waitForJob(o.reductionJobId);
    expect(done.status, done.error_message ?? '').toBe('succeeded');
    expect(done.progress).toBe(1);

    const scan = await Scan.findByPk(scanId);
    expect(scan?.status).toBe('reduced');
    const result = await ScanResult.findByPk(scan?.latest_result_id ?? 0);
    expect(result).not.toBeNull();
    const json = result!.result_json;
    expect(json.format).toBe('lobeline.result');
    expect(json.steps).toHaveLength(truth.steps.length);
    for (const step of json.steps) {
      const t = truth.steps[step.index]!;
      expect(step.offset_deg).not.toBeNull();
      expect(step.offset_err_deg).toBeGreaterThan(0);
      const tolerance = 3 * (step.offset_err_deg ?? 0) + 0.3;
      expect(
        Math.abs((step.offset_deg ?? Number.NaN) - (t.offset_deg ?? Number.NaN)),
        `step ${step.index}`,
      ).toBeLessThanOrEqual(tolerance);
    }
    // per-step rows, headline numbers, derived object, locks
    const steps = await ScanResultStep.findAll({ where: { result_id: result!.id }, order: [['step_index', 'ASC']] });
    expect(steps.map((s) => s.step_index)).toEqual(truth.steps.map((s) => s.index));
    expect(steps[0]?.offset_deg).toBeCloseTo(json.steps[0]?.offset_deg ?? Number.NaN, 9);
    expect(scan?.offset_deg).toBeCloseTo(result!.offset_deg ?? Number.NaN, 9);
    const head = await headObject(result!.derived_bucket ?? '', result!.derived_key ?? '');
    expect(head.size).toBeGreaterThan(1000);
    expect(result!.derived_key).toBe(
      `derived/${world.teamSlug}/${scanId}/cal-${world.calibrationId}-set-${world.settingsId}.h5`,
    );
    expect((await DetectorCalibrationVersion.findByPk(world.calibrationId))?.locked_at).not.toBeNull();
    expect((await AnalysisSettingsVersion.findByPk(world.settingsId))?.locked_at).not.toBeNull();
  });

  it('is idempotent: enqueueing the same scan and versions twice gives one result row', async () => {
    const { scanId } = await addScan({ seed: 5, steps: 2 });
    const [a, b] = await Promise.all([enqueueReductionForScan(scanId), enqueueReductionForScan(scanId)]);
    const qa = queued(a);
    const qb = queued(b);
    expect(qa.queueJobId).toBe(qb.queueJobId);
    await waitForJob(qa.reductionJobId);
    if (qb.reductionJobId !== qa.reductionJobId) await waitForJob(qb.reductionJobId);
    expect(await ScanResult.count({ where: { scan_id: scanId } })).toBe(1);
    // Asked again after it finished: the job succeeds without a second row.
    const c = queued(await enqueueReductionForScan(scanId));
    const again = await waitForJob(c.reductionJobId);
    expect(again.status).toBe('succeeded');
    expect(await ScanResult.count({ where: { scan_id: scanId } })).toBe(1);
    // Finished entries leave Redis (MariaDB keeps the history), so a later request is not swallowed by an old entry.
    let left = await getReductionQueue().getJob(c.queueJobId);
    for (let i = 0; i < 40 && left; i++) {
      await new Promise((r) => setTimeout(r, 50));
      left = await getReductionQueue().getJob(c.queueJobId);
    }
    expect(left).toBeUndefined();
  });

  it('fails a corrupt file with its reason, marks the scan failed and e-mails the analysts', async () => {
    const { scanId } = await addScan({ seed: 9, steps: 3 }, 'nan_counts');
    const o = queued(await enqueueReductionForScan(scanId));
    const done = await waitForJob(o.reductionJobId);
    expect(done.status).toBe('failed');
    // The reader's sentence names the dataset, the step and the pixel.
    expect(done.error_message).toMatch(/\/entry\/data\/counts/);
    expect(done.error_message).toMatch(/must be finite/);
    expect(done.attempts).toBe(1); // a broken file is not retried
    const scan = await Scan.findByPk(scanId);
    expect(scan?.status).toBe('failed');
    expect(scan?.status_message).toBe(done.error_message);
    expect(await ScanResult.count({ where: { scan_id: scanId } })).toBe(0);
    const deadline = Date.now() + 10_000;
    let mails = await listCaughtMessages({ to: world.analystEmail });
    while (!mails.some((m) => m.text.includes(`/scans/${scanId}`)) && Date.now() < deadline) {
      await new Promise((r) => setTimeout(r, 200));
      mails = await listCaughtMessages({ to: world.analystEmail });
    }
    const mail = mails.find((m) => m.text.includes(`/scans/${scanId}`));
    expect(mail?.subject).toMatch(/reduction of .* failed/);
    expect(mail?.text).toMatch(/must be finite/);
    // operators do not get it
    const toOperator = await listCaughtMessages({ to: `operator-${tag}@harbor-point.example` });
    expect(toOperator.some((m) => m.text.includes(`/scans/${scanId}`))).toBe(false);
  });

  it('refuses a calibration whose centre lies outside the detector, in words', async () => {
    const { scanId } = await addScan({ seed: 12, steps: 2 });
    const bad = await DetectorCalibrationVersion.create({
      campaign_id: world.campaignId,
      version: 99,
      body: { ...planScan(BASE).calibration, center_px: [900, 40] },
      note: 'typo in the centre',
      status: 'draft',
      created_by: null,
      approved_by: null,
      approved_at: null,
      locked_at: null,
    });
    const o = queued(await enqueueReductionForScan(scanId, { calibrationId: bad.id }));
    const done = await waitForJob(o.reductionJobId);
    expect(done.status).toBe('failed');
    expect(done.error_message).toMatch(
      /calibration centre \(x 900, y 40 px\) lies outside the detector, which is 192 × 192 pixels/,
    );
    expect((await DetectorCalibrationVersion.findByPk(bad.id))?.locked_at).toBeNull();
  });

  it('a truncated file fails with the reader’s reason', async () => {
    const { scanId } = await addScan({ seed: 13, steps: 2 }, 'truncated');
    const o = queued(await enqueueReductionForScan(scanId));
    const done = await waitForJob(o.reductionJobId);
    expect(done.status).toBe('failed');
    expect(done.error_message).toMatch(/scan file could not be used/);
    expect(done.error_message?.length ?? 0).toBeGreaterThan(40);
  });
});
