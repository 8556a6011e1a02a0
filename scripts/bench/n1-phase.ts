/**
 * N1 — two-colour phase analysis of a 64-step 512×512 float32 stack (PRODUCT.md N1).
 * Times, on the same file in the same run: Lobeline's streaming per-pixel analysis (reduction/phase-maps.ts)
 * reading frame by frame from the file (read + compute) and on frames already in memory (compute alone); a plain
 * numpy/h5py script (h5py read + numpy.fft.rfft(axis=0)[1]) and numpy's best (tensordot onto cos/sin) via
 * /usr/bin/python3 (scripts/bench/n1_numpy.py); and the memory-read bound (one JS pass summing the in-memory stack).
 * Also checks that Lobeline's amplitude and phase agree with numpy's rfft.
 */
import { spawnSync } from 'node:child_process';
import { existsSync } from 'node:fs';
import path from 'node:path';
import { loadH5wasmNode } from '@/reduction/hdf5/node';
import { openScanFile } from '@/reduction/hdf5/reader';
import { createPhaseAccumulator } from '@/reduction/phase-maps';
import { planScan } from '@/reduction/synth/model';
import { writeSynthScan } from '@/reduction/synth/scan-file';
import { BENCH_DIR, median, row, timeRuns } from './common';

const REPS = 5;
const file = path.join(BENCH_DIR, 'n1-two-color-64x512x512-f32.h5');
const rt = await loadH5wasmNode();
if (!existsSync(file)) {
  const t0 = performance.now();
  writeSynthScan(
    rt,
    file,
    planScan({
      kind: 'two_color_phase',
      steps: 64,
      periods: 2,
      size: 512,
      counts: 2e6,
      dtype: 'float32',
      compression: 'none',
      seed: 1,
    }),
  );
  process.stdout.write(`  (generated ${path.basename(file)} in ${((performance.now() - t0) / 1000).toFixed(1)} s)\n`);
}
const opened = openScanFile(rt, file);
if (!opened.ok) throw new Error(opened.problems.map((p) => p.message).join('\n'));
const scan = opened.scan;
const { nStep, nY, nX } = scan.meta.shape;
const nPix = nY * nX;
const phases = scan.meta.step.values;

function analyse(getFrame: (k: number) => ArrayLike<number>, harmonics: number) {
  const acc = createPhaseAccumulator(nPix, harmonics);
  for (let k = 0; k < nStep; k++) acc.addFrame(getFrame(k), phases[k] as number);
  return acc.finish({ minCounts: 0 });
}

const buf = new Float64Array(nPix);
const readCompute = timeRuns(REPS, () => analyse((k) => scan.readFrame(k, buf), 1));
const readOnly = timeRuns(REPS, () => {
  for (let k = 0; k < nStep; k++) scan.readFrame(k, buf);
});
const stack = Array.from({ length: nStep }, (_, k) => scan.readFrame(k));
const compute = timeRuns(REPS, () => analyse((k) => stack[k] as Float64Array, 1));
const compute2 = timeRuns(REPS, () => analyse((k) => stack[k] as Float64Array, 2));
let sink = 0;
const memBound = timeRuns(REPS, () => {
  let s = 0;
  for (let k = 0; k < nStep; k++) {
    const f = stack[k] as Float64Array;
    for (let i = 0; i < nPix; i++) s += f[i] as number;
  }
  sink += s;
});
const maps = analyse((k) => stack[k] as Float64Array, 1).maps;
scan.close();

// numpy in the same run, on the same file
const py = spawnSync('/usr/bin/python3', [path.join(import.meta.dirname, 'n1_numpy.py'), file, String(REPS), '2'], {
  encoding: 'utf8',
  maxBuffer: 64 * 1024 * 1024,
});
if (py.status !== 0) throw new Error(`numpy bench failed: ${py.stderr}`);
const np = JSON.parse(py.stdout) as {
  rfft_read_ms: number[];
  rfft_ms: number[];
  tensordot_read_ms: number[];
  tensordot_ms: number[];
  h5py_read_ms: number[];
  probe: { index: number; amplitude: number; phase: number }[];
};

// agreement with numpy's rfft (A1 = 2|F1|/N, φ0 = φ_s − arg F1, SCIENCE.md §6.2)
let dA = 0;
let dP = 0;
let compared = 0;
for (const p of np.probe) {
  const a = maps.amplitude[p.index] as number;
  const ph = maps.phase_of_max[p.index] as number;
  if (!Number.isFinite(a) || !Number.isFinite(ph)) continue; // masked (mean below min_counts = 0: empty pixel)
  compared++;
  dA = Math.max(dA, Math.abs(a - p.amplitude) / Math.max(1, p.amplitude));
  if (p.amplitude > 5) dP = Math.max(dP, Math.abs(Math.atan2(Math.sin(ph - p.phase), Math.cos(ph - p.phase))));
}

const m = {
  readCompute: median(readCompute),
  readOnly: median(readOnly),
  compute: median(compute),
  compute2: median(compute2),
  mem: median(memBound),
  rfftRead: median(np.rfft_read_ms),
  rfft: median(np.rfft_ms),
  tdRead: median(np.tensordot_read_ms),
  td: median(np.tensordot_ms),
  h5py: median(np.h5py_read_ms),
};
const lines = [
  `N1 two-colour phase analysis, ${nStep}×${nY}×${nX} float32 (uncompressed file, ${REPS} reps, medians)`,
  row('Lobeline: read frame by frame + streaming analysis (H = 1)', m.readCompute),
  row('Lobeline: read frames only (h5wasm hyperslabs → Float64Array)', m.readOnly),
  row('Lobeline: streaming analysis on frames in memory (H = 1)', m.compute),
  row('Lobeline: streaming analysis on frames in memory (H = 2)', m.compute2),
  row('memory-read bound: one JS pass summing the in-memory stack', m.mem),
  row('numpy: h5py read + numpy.fft.rfft(axis=0)[1]', m.rfftRead),
  row('numpy: rfft(axis=0)[1] on the stack in memory', m.rfft),
  row('numpy best: h5py read + tensordot onto cos/sin', m.tdRead),
  row('numpy best: tensordot onto cos/sin in memory', m.td),
  row('h5py read alone', m.h5py),
  '  ratios:',
  `    Lobeline read+compute / numpy h5py+rfft             ${(m.readCompute / m.rfftRead).toFixed(2)}  (target < 1)`,
  `    Lobeline compute / numpy rfft (both in memory)      ${(m.compute / m.rfft).toFixed(2)}`,
  `    Lobeline compute / numpy tensordot (in memory)      ${(m.compute / m.td).toFixed(2)}`,
  `    Lobeline read+compute / numpy h5py+tensordot        ${(m.readCompute / m.tdRead).toFixed(2)}`,
  `    Lobeline compute / memory-read bound                ${(m.compute / m.mem).toFixed(2)}  (target ≤ 3)`,
  `  agreement with numpy rfft on ${compared} of ${np.probe.length} probe pixels (others masked): max relative |ΔA1| ${dA.toExponential(1)}, max |Δφ0| ${dP.toExponential(1)} rad`,
];
process.stdout.write(`${lines.join('\n')}\n`);
if (sink === 0.5) process.stdout.write(''); // keep the summing loop alive
