/**
 * EVENTS-FLOW — one large event file through the real queue: the reduction job splits it into chunk jobs (a BullMQ
 * flow, lib/queue/event-flow.ts), N worker processes (scripts/worker.ts, as an operator runs them) count the chunks
 * and one of them merges and analyses. Uses the services of the environment (.env, or the test instance with
 * LOBELINE_INSTANCE=test); stop other workers of that instance first, or they join in and the figures mean nothing.
 *
 * 1. Speed-up: the same 10⁷-event file reduced with 1, 2 and 4 worker processes (`--workers 1,2,4`): wall time from
 *    the request to the committed result (the workers are started and ready before; each downloads the file once),
 *    events per second, ratio to one worker. Every run must give the same event tally (checked, exact).
 * 2. Memory: peak resident memory (VmHWM of /proc/<pid>/status) of each of 2 worker processes reducing a 10⁷- and a
 *    10⁸-event file (`--memory 1e7,1e8`), side by side: it must not grow with the file (one slice of
 *    `events.chunk_events` and one histogram per worker; the merge holds one chunk part and one step histogram).
 *
 * Files: uniform momenta in ±1.2 a.u. sent forward through a 0.1 m / 2000 V/m spectrometer with a 10 G field
 * (reduction/events/kinematics.ts), float32, one step, written slice by slice into the OS temp folder; removed
 * afterwards together with their raw objects. The bench's team, campaign and scans stay in the database (named
 * `bench-flow-…`). Chunk jobs of `--chunk` events (default 10⁶), grid 201², 20 bootstrap resamples.
 */
import { type ChildProcess, spawn } from 'node:child_process';
import { createHash, randomBytes } from 'node:crypto';
import { createReadStream, existsSync, mkdtempSync, readFileSync, rmSync, statSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { parseEnv as parseDotEnv } from 'node:util';

const REPO = path.resolve(fileURLToPath(new URL('../..', import.meta.url)));
if (process.env.LOBELINE_INSTANCE !== 'test' && existsSync(path.join(REPO, '.env'))) {
  for (const [k, v] of Object.entries(parseDotEnv(readFileSync(path.join(REPO, '.env'), 'utf8')))) {
    if (process.env[k] === undefined) process.env[k] = v;
  }
}
await import('../server-only-shim');
const { getDb, closeSequelize } = await import('@/lib/db');
const models = await import('@/models');
const { buckets, putObject, deleteObject, closeS3Client } = await import('@/lib/storage/s3');
const { enqueueReductionForScan } = await import('@/lib/queue/enqueue');
const { closeReductionQueue } = await import('@/lib/queue/reduction-queue');
const { auToNs, bohrToMm, flightTimeAu, impactPoint, spectrometerAu } = await import('@/reduction/events/kinematics');
const { createNxGroup, writeScalar, writeVector } = await import('@/reduction/hdf5/h5-write');
const { loadH5wasmNode } = await import('@/reduction/hdf5/node');
const { createPrng } = await import('@/reduction/prng');

const SPEC = {
  acceleration_length_m: 0.1,
  drift_length_m: 0,
  electric_field_v_per_m: 2000,
  magnetic_field_t: 1e-3,
  t0_ns: 10,
  detector_center_mm: [0, 0] as [number, number],
};
const SLICE = 1_000_000;
const tag = randomBytes(3).toString('hex');

function arg(name: string, fallback: string): string {
  const i = process.argv.indexOf(name);
  return i >= 0 ? (process.argv[i + 1] ?? fallback) : fallback;
}

/** Writes an n-event file slice by slice (never all events in memory). */
async function writeEventFile(file: string, n: number): Promise<void> {
  const rt = await loadH5wasmNode();
  const f = new rt.File(file, 'w');
  try {
    const entry = createNxGroup(f, 'entry', 'NXentry');
    entry.create_dataset({ name: 'experiment_kind', data: 'angular_streaking' });
    entry.create_dataset({ name: 'start_time', data: '2026-12-03T11:00:00+00:00' });
    createNxGroup(entry, 'sample', 'NXsample').create_dataset({ name: 'name', data: 'He' });
    const inst = createNxGroup(entry, 'instrument', 'NXinstrument');
    const src = createNxGroup(inst, 'source', 'NXsource');
    writeScalar(src, 'wavelength', 800, 'nm');
    src.create_dataset({ name: 'ellipticity', data: 0.87 });
    src.create_dataset({ name: 'helicity', data: 1 });
    const spec = createNxGroup(inst, 'spectrometer', 'NXcollection');
    writeScalar(spec, 'acceleration_length', SPEC.acceleration_length_m, 'm');
    writeScalar(spec, 'electric_field', SPEC.electric_field_v_per_m, 'V/m');
    writeScalar(spec, 'magnetic_field', SPEC.magnetic_field_t, 'T');
    writeScalar(spec, 't0', SPEC.t0_ns, 'ns');
    writeVector(spec, 'detector_center', [0, 0], 'mm');
    const ev = createNxGroup(entry, 'events', 'NXevent_data');
    const ds = (['x', 'y', 'tof'] as const).map((name) => {
      const d = ev.create_dataset({
        name,
        data: new Float32Array(0),
        shape: [0],
        maxshape: [null],
        chunks: [65536],
        dtype: '<f',
      });
      d.create_attribute('units', name === 'tof' ? 'ns' : 'mm');
      return d;
    });
    const sp = spectrometerAu(SPEC);
    const rng = createPrng(5);
    const bufs = [new Float32Array(SLICE), new Float32Array(SLICE), new Float32Array(SLICE)];
    for (let a = 0; a < n; a += SLICE) {
      const m = Math.min(SLICE, n - a);
      for (let i = 0; i < m; i++) {
        const t = flightTimeAu(rng.uniform() * 2.4 - 1.2, sp);
        const [bx, by] = impactPoint(rng.uniform() * 2.4 - 1.2, rng.uniform() * 2.4 - 1.2, t, sp);
        bufs[0]![i] = bohrToMm(bx);
        bufs[1]![i] = bohrToMm(by);
        bufs[2]![i] = auToNs(t) + SPEC.t0_ns;
      }
      ds.forEach((d, k) => {
        d.resize([a + m]);
        d.write_slice([[a, a + m]], bufs[k]!.subarray(0, m));
      });
    }
  } finally {
    f.close();
  }
}

async function sha256Of(file: string): Promise<string> {
  const h = createHash('sha256');
  for await (const c of createReadStream(file)) h.update(c as Buffer);
  return h.digest('hex');
}

interface World {
  teamId: number;
  teamSlug: string;
  campaignId: number;
  shiftId: number;
}

async function createWorld(): Promise<World> {
  const team = await models.Team.create({ slug: `bench-flow-${tag}`, name: `Bench flow ${tag}`, description: null });
  const op = await models.User.create({
    email: `bench-flow-${tag}@harbor-point.example`,
    name: 'Bench Operator',
    password_hash: null,
    notification_prefs: null,
    last_sign_in_at: null,
  });
  const campaign = await models.Campaign.create({
    team_id: team.id,
    name: `bench-flow-${tag}`,
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
    title: 'bench',
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
    body: { spectrometer: {} } as unknown as InstanceType<typeof models.DetectorCalibrationVersion>['body'],
    note: 'bench: every spectrometer value from the file',
    locked_at: null,
    ...approved,
  });
  const set = await models.AnalysisSettingsVersion.create({
    campaign_id: campaign.id,
    version: 1,
    body: {
      grid: { p_max_au: 2.0, n: 201 },
      bootstrap: { resamples: 20, seed: 3 },
      events: { laser_axis: '+y', gate_au: null, chunk_events: SLICE },
    } as unknown as InstanceType<typeof models.AnalysisSettingsVersion>['body'],
    note: null,
    locked_at: null,
    ...approved,
  });
  await campaign.update({ current_calibration_id: cal.id, current_settings_id: set.id });
  return { teamId: team.id, teamSlug: team.slug, campaignId: campaign.id, shiftId: shift.id };
}

interface Staged {
  rawFileId: number;
  key: string;
  n: number;
  bytes: number;
  writeMs: number;
}

async function stage(world: World, dir: string, n: number): Promise<Staged> {
  const file = path.join(dir, `events-${n}.h5`);
  const t0 = performance.now();
  await writeEventFile(file, n);
  const writeMs = performance.now() - t0;
  const bytes = statSync(file).size;
  const sha256 = await sha256Of(file);
  const key = `raw/${world.teamSlug}/${sha256}.h5`;
  await putObject({ bucket: buckets().raw, key, body: createReadStream(file), contentLength: bytes });
  rmSync(file, { force: true });
  const raw = await models.RawFile.create({
    team_id: world.teamId,
    sha256,
    bucket: buckets().raw,
    storage_key: key,
    size_bytes: bytes,
    original_name: `events-${n}.h5`,
    status: 'accepted',
    quarantine_reasons: null,
    metadata: null,
    metadata_completeness: null,
    uploaded_by: null,
    verified_at: new Date(),
    released_by: null,
    released_at: null,
    replaced_by_id: null,
    archived_at: null,
    archive_key: null,
    embargo_until: null,
    retention_until: null,
    last_fixity_at: null,
    last_fixity_ok: null,
    deleted_at: null,
  });
  return { rawFileId: raw.id, key, n, bytes, writeMs };
}

function peakRssMiB(pid: number | undefined): number {
  if (!pid) return Number.NaN;
  const m = /VmHWM:\s+(\d+)\s+kB/.exec(readFileSync(`/proc/${pid}/status`, 'utf8'));
  return m ? Number(m[1]) / 1024 : Number.NaN;
}

async function startWorkers(count: number, chunkEvents: number): Promise<ChildProcess[]> {
  const kids = Array.from({ length: count }, () =>
    spawn(process.execPath, ['--import', 'tsx', path.join(REPO, 'scripts/worker.ts')], {
      cwd: REPO,
      env: { ...process.env, LOG_LEVEL: 'warn', EVENT_SPLIT_EVENTS: '1', EVENT_CHUNK_JOB_EVENTS: String(chunkEvents) },
      stdio: ['ignore', 'pipe', 'pipe'],
    }),
  );
  await Promise.all(
    kids.map(
      (k) =>
        new Promise<void>((resolve, reject) => {
          let out = '';
          const on = (d: Buffer) => {
            out += String(d);
            if (out.includes('waiting for jobs')) resolve();
          };
          k.stdout?.on('data', on);
          k.stderr?.on('data', (d) => (out += String(d)));
          k.once('exit', (code) => reject(new Error(`worker exited (${code}) before it was ready:\n${out}`)));
        }),
    ),
  );
  return kids;
}

async function stopWorkers(kids: ChildProcess[]): Promise<void> {
  await Promise.all(
    kids.map(
      (k) =>
        new Promise<void>((resolve) => {
          if (k.exitCode !== null || k.signalCode !== null) return resolve();
          k.once('exit', () => resolve());
          k.kill('SIGTERM');
        }),
    ),
  );
}

/** One reduction of a staged file by `workers` processes: wall time, peak RSS per worker, the event tally. */
async function reduceOnce(world: World, staged: Staged, workers: number, chunkEvents: number) {
  const scan = await models.Scan.create({
    team_id: world.teamId,
    campaign_id: world.campaignId,
    shift_id: world.shiftId,
    raw_file_id: staged.rawFileId,
    experiment_kind: 'angular_streaking',
    title: `bench ${staged.n} × ${workers}`,
    target: 'He',
    wavelength_nm: 800,
    ellipticity: 0.87,
    helicity: 1,
    step_quantity: 'index',
    n_steps: 1,
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
  const kids = await startWorkers(workers, chunkEvents);
  try {
    const t0 = performance.now();
    const o = await enqueueReductionForScan(scan.id);
    if (!o.queued) throw new Error(o.reason);
    for (;;) {
      const row = await models.ReductionJob.findByPk(o.reductionJobId);
      if (row?.status === 'failed') throw new Error(`the reduction failed: ${row.error_message}`);
      if (row?.status === 'succeeded') break;
      await new Promise((r) => setTimeout(r, 100));
    }
    const ms = performance.now() - t0;
    const rss = kids.map((k) => peakRssMiB(k.pid));
    const job = await models.ReductionJob.findByPk(o.reductionJobId);
    const result = await models.ScanResult.findOne({ where: { scan_id: scan.id } });
    if (result?.derived_key) await deleteObject(result.derived_bucket ?? buckets().derived, result.derived_key);
    const ev = result?.result_json.events;
    return { ms, rss, chunks: job?.chunks_total ?? 0, tally: JSON.stringify(ev?.steps ?? null), nEvents: ev?.n_events };
  } finally {
    await stopWorkers(kids);
  }
}

async function main(): Promise<void> {
  getDb();
  const workersList = arg('--workers', '1,2,4').split(',').map(Number);
  const speedEvents = Number(arg('--events', '1e7'));
  const memorySizes = arg('--memory', '1e7,1e8').split(',').map(Number);
  const chunkEvents = Number(arg('--chunk', '1e6'));
  const dir = mkdtempSync(path.join(tmpdir(), 'lobeline-bench-flow-'));
  const world = await createWorld();
  const staged: Staged[] = [];
  try {
    console.log(
      `EVENTS-FLOW: event files split into chunk jobs of ${chunkEvents.toExponential(0)} events, reduced by worker processes through the real queue`,
    );
    const sizes = [...new Set([speedEvents, ...memorySizes])];
    const bySize = new Map<number, Staged>();
    for (const n of sizes) {
      const s = await stage(world, dir, n);
      staged.push(s);
      bySize.set(n, s);
      console.log(
        `  file of ${n.toExponential(0)} events: ${(s.bytes / 2 ** 20).toFixed(0)} MiB, written in ${(s.writeMs / 1000).toFixed(1)} s`,
      );
    }
    const speed = bySize.get(speedEvents)!;
    console.log(`  speed-up, ${speedEvents.toExponential(0)} events (request → committed result):`);
    let base: number | null = null;
    let tally: string | null = null;
    for (const w of workersList) {
      const r = await reduceOnce(world, speed, w, chunkEvents);
      base ??= r.ms;
      tally ??= r.tally;
      console.log(
        `    ${w} worker(s): ${(r.ms / 1000).toFixed(1)} s wall, ${(speedEvents / (r.ms / 1000) / 1e6).toFixed(2)}×10⁶ events/s, ` +
          `${(base / r.ms).toFixed(2)} × one worker; ${r.chunks} chunks; peak RSS per worker ${r.rss.map((x) => x.toFixed(0)).join(', ')} MiB; ` +
          `event tally ${r.tally === tally && r.nEvents === speedEvents ? 'equals the first run' : 'DIFFERS'}`,
      );
    }
    console.log('  peak memory per worker, 2 workers (VmHWM):');
    for (const n of memorySizes) {
      const r = await reduceOnce(world, bySize.get(n)!, 2, chunkEvents);
      console.log(
        `    ${n.toExponential(0).padEnd(5)} events (${(bySize.get(n)!.bytes / 2 ** 20).toFixed(0)} MiB): peak RSS ${r.rss.map((x) => x.toFixed(0)).join(' and ')} MiB; ` +
          `${(r.ms / 1000).toFixed(1)} s wall, ${(n / (r.ms / 1000) / 1e6).toFixed(2)}×10⁶ events/s, ${r.chunks} chunks; ` +
          `${r.nEvents === n ? 'all events accounted for' : `EVENTS MISSING (${r.nEvents})`}`,
      );
    }
  } finally {
    for (const s of staged) await deleteObject(buckets().raw, s.key).catch(() => undefined);
    rmSync(dir, { recursive: true, force: true });
    await closeReductionQueue();
    closeS3Client();
    await closeSequelize();
  }
}

await main();
process.exit(0);
