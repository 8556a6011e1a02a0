/**
 * MODELS — the model overlays of the comparison page (lib/comparison/models.ts; issue 13):
 * - the CTMC-style ensemble (SCIENCE.md §10.7 recipe, reduction/models/ensemble.ts) for 20 intensities of He at
 *   800 nm, ε = 0.87, 1–8 × 10¹⁴ W/cm², ENSEMBLE_TRAJECTORIES (20 000) per intensity as the page runs it (or
 *   BENCH_ENSEMBLE_N), split over 2 processes (2 cores, 10 intensities each); wall time and trajectories per second,
 *   beside the same work of one intensity in this process (1 core) for the ratio;
 * - one Coulomb-corrected trajectory per intensity (§10.5 procedure) for the same 20 intensities, computed afresh
 *   (a new parameter set each repetition) and answered again from the in-process memo; the Keldysh–Rutherford
 *   estimate and the simple-man line beside them. Median of 5.
 * The MariaDB cache's answer (lib/comparison/model-cache.ts) is measured by MODELS-CACHE (scripts/bench/model-cache.ts),
 * which needs the services; this one runs without them.
 */
import { fork } from 'node:child_process';
import { computeEnsembleCurve, ENSEMBLE_SEED, ENSEMBLE_TRAJECTORIES, modelCurve } from '@/lib/comparison/models';
import { median, row, timeRuns } from './common';

const N = 20;
const base = Array.from({ length: N }, (_, k) => 1e14 * 8 ** (k / (N - 1)));
const TRAJ = Number(process.env.BENCH_ENSEMBLE_N ?? ENSEMBLE_TRAJECTORIES);

async function part(intensities: number[]): Promise<void> {
  const curve = await computeEnsembleCurve({
    target: 'He',
    wavelengthNm: 800,
    ellipticity: 0.87,
    intensitiesWcm2: intensities,
    trajectories: TRAJ,
    seed: ENSEMBLE_SEED,
  });
  process.send?.({ offsets: curve.points.map((p) => p.offsetDeg) });
}

if (process.argv[2] === '--part') {
  await part(JSON.parse(process.argv[3]!) as number[]);
  process.exit(0);
}

// ensemble, 20 intensities on 2 processes
const halves = [base.filter((_, i) => i % 2 === 0), base.filter((_, i) => i % 2 === 1)];
const t0 = performance.now();
const offsets = await Promise.all(
  halves.map(
    (h) =>
      new Promise<(number | null)[]>((resolve, reject) => {
        const child = fork(import.meta.filename, ['--part', JSON.stringify(h)], { execArgv: process.execArgv });
        let got: (number | null)[] = [];
        child.on('message', (m) => {
          got = (m as { offsets: (number | null)[] }).offsets;
        });
        child.on('exit', (code) => (code === 0 ? resolve(got) : reject(new Error(`part exited ${code}`))));
      }),
  ),
);
const tEns = performance.now() - t0;
const t1 = performance.now();
await computeEnsembleCurve({
  target: 'He',
  wavelengthNm: 800,
  ellipticity: 0.87,
  intensitiesWcm2: [base[9]!],
  trajectories: TRAJ,
  seed: ENSEMBLE_SEED,
});
const tOne = performance.now() - t1;
const nTraj = N * TRAJ;
console.log(
  row(
    `ensemble, ${N} intensities × ${TRAJ} trajectories, 2 processes`,
    tEns,
    `${((nTraj / tEns) * 1000).toFixed(0)} trajectories/s`,
  ),
);
console.log(
  row(
    `ensemble, 1 intensity × ${TRAJ} trajectories, 1 process`,
    tOne,
    `${((TRAJ / tOne) * 1000).toFixed(0)} trajectories/s; 2-process speed-up ${((tOne * N) / tEns).toFixed(2)} ×`,
  ),
);
const offs = offsets.flat().filter((v): v is number => v !== null);
console.log(
  `  (ensemble offsets ${Math.min(...offs).toFixed(2)}°–${Math.max(...offs).toFixed(2)}° over 1–8 × 10¹⁴ W/cm²)`,
);

let shift = 0;
const fresh = () => base.map((i) => i * (1 + ++shift * 1e-9)); // a new parameter set each time
const afresh = timeRuns(5, () => {
  modelCurve({ model: 'trajectory', target: 'He', wavelengthNm: 800, ellipticity: 0.87, intensitiesWcm2: fresh() });
});
const cachedInput = fresh();
modelCurve({ model: 'trajectory', target: 'He', wavelengthNm: 800, ellipticity: 0.87, intensitiesWcm2: cachedInput });
const cached = timeRuns(
  50,
  () => {
    modelCurve({
      model: 'trajectory',
      target: 'He',
      wavelengthNm: 800,
      ellipticity: 0.87,
      intensitiesWcm2: cachedInput,
    });
  },
  false,
);
const kr = timeRuns(5, () => {
  modelCurve({
    model: 'keldysh_rutherford',
    target: 'He',
    wavelengthNm: 800,
    ellipticity: 0.87,
    intensitiesWcm2: fresh(),
  });
});
const sm = timeRuns(5, () => {
  modelCurve({ model: 'simple_man', target: 'He', wavelengthNm: 800, ellipticity: 0.87, intensitiesWcm2: fresh() });
});
const t = median(afresh);
console.log(row(`trajectory model, ${N} intensities, computed`, t, `${((N / t) * 1000).toFixed(0)} trajectories/s`));
console.log(
  row(
    `trajectory model, ${N} intensities, from the in-process memo`,
    median(cached),
    `${(median(cached) * 1000).toFixed(1)} µs, ${(t / median(cached)).toFixed(0)} × faster`,
  ),
);
console.log(row(`Keldysh–Rutherford estimate, ${N} intensities`, median(kr), `${(median(kr) * 1000).toFixed(1)} µs`));
console.log(row(`simple-man line, ${N} intensities`, median(sm), `${(median(sm) * 1000).toFixed(1)} µs`));
