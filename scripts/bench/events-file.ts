/**
 * EVENTS-FILE — an event file (FORMATS §1.1) from disk to a result, one process, one core: the reader's chunked
 * hyperslab reads (reduction/hdf5/event-reader.ts) plus conversion, gate and histogram (kinematics.ts) plus the
 * image analysis of each step as a virtual frame (reduction/events/reduce-events.ts, 0 bootstrap resamples so the
 * event part dominates). For each size a fresh child process reduces the file and reports its events per second
 * and its peak resident memory (`process.resourceUsage().maxRSS`): with chunks of 10⁶ events the peak must not grow
 * with the file. Side by side in the same run: the sizes 10⁶ and 10⁷ events (`--events 1e6,1e7,1e8` for more; a
 * 10⁸-event file takes 1.2 GB of disk).
 *
 * Then the speed-up of the chunk work over 1, 2 and 4 processes (`--procs`): a 10⁷-event file split into equal
 * ranges, each process reading its range in chunks of 10⁶ and histogramming it (`histogramChunk`, what one chunk job
 * of a split file does), the parent merging the partial histograms; wall time from the first spawn to the merged
 * histogram, checked cell for cell against the one-process histogram. Processes, not queue workers: the BullMQ
 * chunk jobs are not built yet. On a shared machine the figure depends on what else runs.
 *
 * Files: uniform momenta in ±1.2 a.u. sent forward through a 0.1 m / 2000 V/m spectrometer with a 10 G field,
 * float32, one step, written in chunks (never all in memory), into the OS temp folder and removed afterwards.
 */
import { spawn, spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { auToNs, bohrToMm, flightTimeAu, impactPoint, spectrometerAu } from '@/reduction/events/kinematics';
import { createEventReducer, histogramChunk } from '@/reduction/events/reduce-events';
import { analysisSettingsSchema, detectorCalibrationSchema } from '@/reduction/formats';
import { openEventFile } from '@/reduction/hdf5/event-reader';
import { createNxGroup, writeScalar, writeVector } from '@/reduction/hdf5/h5-write';
import { loadH5wasmNode } from '@/reduction/hdf5/node';
import { createPrng } from '@/reduction/prng';

const SPEC = {
  acceleration_length_m: 0.1,
  drift_length_m: 0,
  electric_field_v_per_m: 2000,
  magnetic_field_t: 1e-3,
  t0_ns: 10,
  detector_center_mm: [0, 0] as [number, number],
};
const WRITE_CHUNK = 1_000_000;

async function writeFile(file: string, n: number): Promise<void> {
  const rt = await loadH5wasmNode();
  const f = new rt.File(file, 'w');
  try {
    const entry = createNxGroup(f, 'entry', 'NXentry');
    entry.create_dataset({ name: 'experiment_kind', data: 'angular_streaking' });
    entry.create_dataset({ name: 'start_time', data: '2026-12-03T10:00:00+00:00' });
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
    const make = (name: string, units: string) => {
      const d = ev.create_dataset({
        name,
        data: new Float32Array(0),
        shape: [0],
        maxshape: [null],
        chunks: [65536],
        dtype: '<f',
      });
      d.create_attribute('units', units);
      return d;
    };
    const ds = [make('x', 'mm'), make('y', 'mm'), make('tof', 'ns')];
    const sp = spectrometerAu(SPEC);
    const rng = createPrng(3);
    const bufs = [new Float32Array(WRITE_CHUNK), new Float32Array(WRITE_CHUNK), new Float32Array(WRITE_CHUNK)];
    for (let a = 0; a < n; a += WRITE_CHUNK) {
      const m = Math.min(WRITE_CHUNK, n - a);
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

/** Child: reduce one file, print one JSON line. */
async function reduceChild(file: string): Promise<void> {
  const rt = await loadH5wasmNode();
  const t0 = performance.now();
  const r = openEventFile(rt, file);
  if (!r.ok) throw new Error(r.problems.map((p) => p.message).join('\n'));
  const settings = analysisSettingsSchema.parse({ bootstrap: { resamples: 0, seed: 1 } });
  const reducer = createEventReducer({
    meta: r.scan.meta,
    spectrometer: r.scan.events.spectrometer,
    calibration: detectorCalibrationSchema.parse({ center_px: [0, 0], momentum_per_pixel_au: 1 }),
    settings,
  });
  let readMs = 0;
  let chunks = 0;
  for (let k = 0; k < r.scan.meta.shape.nStep; k++) {
    const it = r.scan.stepChunks(k, reducer.eventSettings.chunk_events);
    for (;;) {
      const a = performance.now();
      const next = it.next();
      readMs += performance.now() - a;
      if (next.done) break;
      reducer.addChunk(k, next.value);
      chunks++;
    }
    reducer.finishStep(k);
  }
  reducer.finish();
  r.scan.close();
  const ms = performance.now() - t0;
  console.log(
    JSON.stringify({ n: r.scan.events.nEvents, ms, readMs, chunks, maxRssMiB: process.resourceUsage().maxRSS / 1024 }),
  );
}

/** Child: histogram events [start, start + count) in chunks of 10⁶, write the histogram (float64) to `out`. */
async function rangeChild(file: string, start: number, count: number, out: string): Promise<void> {
  const rt = await loadH5wasmNode();
  const r = openEventFile(rt, file);
  if (!r.ok) throw new Error(r.problems.map((p) => p.message).join('\n'));
  const settings = analysisSettingsSchema.parse({});
  let total: Float64Array | null = null;
  for (let a = start; a < start + count; a += WRITE_CHUNK) {
    const c = r.scan.readEvents(a, Math.min(WRITE_CHUNK, start + count - a));
    const { hist } = histogramChunk(c, r.scan.events.spectrometer, settings);
    if (total === null) total = hist;
    else for (let i = 0; i < hist.length; i++) total[i] = (total[i] as number) + (hist[i] as number);
  }
  r.scan.close();
  writeFileSync(out, Buffer.from((total ?? new Float64Array(0)).buffer));
}

function runChild(args: string[]): Promise<void> {
  return new Promise((resolve, reject) => {
    const c = spawn(process.execPath, ['--import', 'tsx', import.meta.filename, ...args], {
      stdio: ['ignore', 'ignore', 'pipe'],
    });
    let err = '';
    c.stderr.on('data', (d) => (err += String(d)));
    c.on('exit', (code) => (code === 0 ? resolve() : reject(new Error(err))));
  });
}

async function speedUp(dir: string, procsList: number[]): Promise<void> {
  const n = 10_000_000;
  const file = path.join(dir, 'events-split.h5');
  await writeFile(file, n);
  console.log(`  chunk work split over processes (${n.toExponential(0)} events, ${procsList.join(', ')} processes):`);
  let base: number | null = null;
  let reference: Float64Array | null = null;
  for (const procs of procsList) {
    const t0 = performance.now();
    const per = Math.ceil(n / procs);
    const outs = Array.from({ length: procs }, (_, i) => path.join(dir, `part-${procs}-${i}.f64`));
    await Promise.all(
      outs.map((out, i) =>
        runChild(['--range', file, String(i * per), String(Math.max(0, Math.min(per, n - i * per))), out]),
      ),
    );
    let merged: Float64Array | null = null;
    for (const out of outs) {
      const b = readFileSync(out);
      const part = new Float64Array(b.buffer, b.byteOffset, b.byteLength / 8);
      if (merged === null) merged = Float64Array.from(part);
      else for (let i = 0; i < part.length; i++) merged[i] = (merged[i] as number) + (part[i] as number);
      rmSync(out, { force: true });
    }
    const ms = performance.now() - t0;
    base ??= ms;
    reference ??= merged;
    const same = merged !== null && reference !== null && merged.every((v, i) => v === reference![i]);
    console.log(
      `    ${procs} process(es): ${ms.toFixed(0)} ms wall, speed-up ${(base / ms).toFixed(2)} × one process; merged histogram ${same ? 'equals' : 'DIFFERS FROM'} the one-process one`,
    );
  }
  rmSync(file, { force: true });
}

async function main(): Promise<void> {
  const arg = process.argv.indexOf('--reduce');
  if (arg >= 0) return reduceChild(process.argv[arg + 1] as string);
  const ri = process.argv.indexOf('--range');
  if (ri >= 0) {
    const [file, start, count, out] = process.argv.slice(ri + 1, ri + 5) as [string, string, string, string];
    return rangeChild(file, Number(start), Number(count), out);
  }
  const pi = process.argv.indexOf('--procs');
  const procsList = (pi >= 0 ? (process.argv[pi + 1] as string) : '1,2,4').split(',').map(Number);
  const ei = process.argv.indexOf('--events');
  const sizes = (ei >= 0 ? (process.argv[ei + 1] as string) : '1e6,1e7').split(',').map(Number);
  const dir = mkdtempSync(path.join(tmpdir(), 'lobeline-bench-events-'));
  console.log('EVENTS-FILE: event file → result, one process per size, one core, chunks of 10⁶ events');
  try {
    for (const n of sizes) {
      const file = path.join(dir, `events-${n}.h5`);
      await writeFile(file, n);
      const size = statSync(file).size;
      const child = spawnSync(process.execPath, ['--import', 'tsx', import.meta.filename, '--reduce', file], {
        encoding: 'utf8',
      });
      rmSync(file, { force: true });
      if (child.status !== 0) throw new Error(child.stderr);
      const out = JSON.parse(child.stdout.trim().split('\n').pop() as string) as {
        n: number;
        ms: number;
        readMs: number;
        chunks: number;
        maxRssMiB: number;
      };
      console.log(
        `  ${n.toExponential(0).padEnd(5)} events (${(size / 2 ** 20).toFixed(0)} MiB): ${(out.n / (out.ms / 1e3) / 1e6).toFixed(2)}×10⁶ events/s ` +
          `(${out.ms.toFixed(0)} ms, of which HDF5 chunk reads ${out.readMs.toFixed(0)} ms, ${out.chunks} chunks); peak RSS ${out.maxRssMiB.toFixed(0)} MiB`,
      );
    }
    await speedUp(dir, procsList);
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

await main();
