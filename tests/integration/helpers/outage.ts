// A private test instance for the outage tests (tests/integration/outage-*.test.ts): its own MariaDB, Redis and
// S3 + SMTP process on ports of its own (scripts/services.ts, `test-<name>` instances), so that taking a service away
// never disturbs the shared test instance. The test process switches its whole environment to the private
// instance (this vitest file runs in a process of its own), migrates it and builds one campaign with an approved
// calibration and settings, into which `addScan` puts synthetic scan files (reduction/synth, the project's forward
// model) the way the ingest would.
import { createHash, randomBytes } from 'node:crypto';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { getDb } from '@/lib/db';
import { closeSequelize } from '@/lib/db/client';
import { getMigrator } from '@/lib/db/migrator';
import { resetEnvCache } from '@/lib/env';
import { closeReductionQueue } from '@/lib/queue/reduction-queue';
import { buckets, closeS3Client, putObject } from '@/lib/storage/s3';
import {
  AnalysisSettingsVersion,
  Campaign,
  DetectorCalibrationVersion,
  Membership,
  RawFile,
  ReductionJob,
  Scan,
  Shift,
  Team,
  User,
} from '@/models';
import { loadH5wasmNode, openScanPath } from '@/reduction/hdf5/node';
import { planScan, type SynthOptions } from '@/reduction/synth/model';
import { writeSynthScan } from '@/reduction/synth/scan-file';
import { instanceDefaults, type SingleService, serviceAnswers, startServices, stopServices } from '@/scripts/services';
import { rawFileRow } from './rows';

/** Small, fast scans: the default forward model on a 192-pixel detector, 40 bootstrap resamples. */
const BASE: Partial<SynthOptions> = { kind: 'angular_streaking', size: 192, steps: 4, counts: 1.5e5, offsetDeg: 6 };
const SETTINGS = { bootstrap: { resamples: 40, seed: 7 }, grid: { p_max_au: 2.0, n: 201 } };

export interface OutageInstance {
  name: `test-${string}`;
  env: Record<string, string>;
  stop(service: SingleService): Promise<void>;
  start(service: SingleService): Promise<void>;
  answers(service: SingleService): Promise<boolean>;
  /** A synthetic scan in the raw bucket with its raw_files and scans rows, status `uploaded`. */
  addScan(options?: Partial<SynthOptions>): Promise<{ scanId: number; steps: number }>;
  close(): Promise<void>;
}

/**
 * Polls `fn` until it returns a value other than undefined (bounded: throws after `timeoutMs` with `what`).
 * Errors thrown by `fn` (a service still coming back) count as "not yet".
 */
export async function waitFor<T>(what: string, fn: () => Promise<T | undefined>, timeoutMs = 90_000): Promise<T> {
  const deadline = Date.now() + timeoutMs;
  let last: unknown;
  for (;;) {
    try {
      const v = await fn();
      if (v !== undefined) return v;
    } catch (err) {
      last = err;
    }
    if (Date.now() > deadline) throw new Error(`${what}: not reached after ${timeoutMs} ms (${String(last ?? '')})`);
    await new Promise((r) => setTimeout(r, 200));
  }
}

async function resetClients(): Promise<void> {
  await closeReductionQueue();
  closeS3Client();
  await closeSequelize();
}

/** Starts (fresh) and migrates a private instance and points this process at it. */
export async function openOutageInstance(name: `test-${string}`, basePort: number): Promise<OutageInstance> {
  const env: Record<string, string> = {
    ...instanceDefaults(name),
    DB_PORT: String(basePort),
    REDIS_URL: `redis://127.0.0.1:${basePort + 1}`,
    S3_ENDPOINT: `http://127.0.0.1:${basePort + 2}`,
    SMTP_PORT: String(basePort + 3),
    APP_ORIGIN: `http://127.0.0.1:${basePort + 4}`,
    NEXTAUTH_URL: `http://127.0.0.1:${basePort + 4}`,
  };
  await resetClients();
  await startServices(name, { fresh: true, env });
  Object.assign(process.env, env);
  resetEnvCache();
  await getMigrator().up();

  const tag = randomBytes(4).toString('hex');
  const work = mkdtempSync(path.join(tmpdir(), `lobeline-${name}-${tag}-`));
  getDb();
  const plan0 = planScan(BASE);
  const team = await Team.create({ slug: `out-${tag}`, name: `Outage test team ${tag}`, description: null });
  const analyst = await User.create({
    email: `outage-analyst-${tag}@harbor-point.example`,
    name: 'Outage Analyst',
    password_hash: null,
    notification_prefs: null,
    last_sign_in_at: null,
  });
  await Membership.create({ user_id: analyst.id, team_id: team.id, role: 'analyst' });
  const campaign = await Campaign.create({
    team_id: team.id,
    name: `He 800 nm outage test ${tag}`,
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
    title: 'Outage shift',
    opened_by: analyst.id,
    opened_at: new Date(),
    closed_by: null,
    closed_at: null,
    receipt_sent_at: null,
  });
  const approved = { created_by: analyst.id, approved_by: analyst.id, approved_at: new Date(), locked_at: null };
  const cal = await DetectorCalibrationVersion.create({
    campaign_id: campaign.id,
    version: 1,
    body: plan0.calibration,
    note: 'from the generator',
    status: 'approved',
    ...approved,
  });
  const set = await AnalysisSettingsVersion.create({
    campaign_id: campaign.id,
    version: 1,
    body: SETTINGS as unknown as AnalysisSettingsVersion['body'],
    note: null,
    status: 'approved',
    ...approved,
  });
  await campaign.update({ current_calibration_id: cal.id, current_settings_id: set.id });

  return {
    name,
    env,
    stop: (service) => stopServices(name, { only: service, env }),
    start: (service) => startServices(name, { only: service, env }),
    answers: (service) => serviceAnswers(name, service, env),
    addScan: async (options = {}) => {
      const rt = await loadH5wasmNode();
      const plan = planScan({ ...BASE, ...options });
      const file = path.join(work, `scan-${randomBytes(4).toString('hex')}.h5`);
      writeSynthScan(rt, file, plan, null);
      const bytes = new Uint8Array(readFileSync(file));
      const sha256 = createHash('sha256').update(bytes).digest('hex');
      const key = `raw/${team.slug}/${sha256}.h5`;
      await putObject({ bucket: buckets().raw, key, body: bytes, contentLength: bytes.length });
      const opened = await openScanPath(file);
      if (!opened.ok) throw new Error('the generated scan does not open');
      const meta = opened.scan.meta;
      opened.scan.close();
      const raw = await RawFile.create(
        rawFileRow(team.id, {
          sha256,
          storage_key: key,
          size_bytes: bytes.length,
          original_name: path.basename(file),
          metadata: meta,
        }),
      );
      const scan = await Scan.create({
        team_id: team.id,
        campaign_id: campaign.id,
        shift_id: shift.id,
        raw_file_id: raw.id,
        experiment_kind: plan.options.kind,
        title: `outage scan ${raw.id}`,
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
      return { scanId: scan.id, steps: plan.steps.length };
    },
    close: async () => {
      await resetClients();
      await stopServices(name, { env });
      rmSync(work, { recursive: true, force: true });
    },
  };
}

/** The reduction_jobs row once it is `succeeded` or `failed`. */
export function finished(reductionJobId: number, timeoutMs = 120_000): Promise<ReductionJob> {
  return waitFor(
    `reduction job ${reductionJobId} finished`,
    async () => {
      const row = await ReductionJob.findByPk(reductionJobId);
      return row && (row.status === 'succeeded' || row.status === 'failed') ? row : undefined;
    },
    timeoutMs,
  );
}
