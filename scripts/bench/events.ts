/**
 * EVENTS — conversion of event lists to momenta plus histogramming (reduction/events/kinematics.ts, SCIENCE §7.7–7.8;
 * the per-core rate of issue "event-mode detector data", point 7). One process, one core: 10⁷ synthetic events
 * (uniform momenta in ±1.2 a.u. sent forward through a 0.1 m / 2000 V/m spectrometer, with and without a 0.2 m
 * drift and a 15 G magnetic field) converted and counted in chunks of 10⁶ into a 401 × 401 grid; median of 3 runs.
 * Side by side in the same run: a plain pass that only reads the three arrays and sums them, the memory-read floor.
 * Reading the events from HDF5 in chunks and the peak memory per file size are measured in events-file.ts; not
 * measured yet: the speed-up with several worker processes (the chunk jobs are not built yet).
 */
import {
  auToNs,
  bohrToMm,
  emptyHistogram,
  flightTimeAu,
  histogramEvents,
  impactPoint,
  spectrometerAu,
} from '@/reduction/events/kinematics';
import { cartesianGrid } from '@/reduction/grids';
import { createPrng } from '@/reduction/prng';
import { median, timeRuns } from './common';

const N = 10_000_000;
const CHUNK = 1_000_000;
const grid = cartesianGrid({ grid: { n: 401, p_max_au: 2 } });

const cases = [
  { name: 'single region, no magnetic field', D: 0, B: 0 },
  { name: 'Wiley–McLaren drift 0.2 m, B = 15 G', D: 0.2, B: 1.5e-3 },
];
console.log(
  `EVENTS: ${N.toExponential(0)} events in chunks of ${CHUNK.toExponential(0)}, ${grid.n} × ${grid.n} grid, one core`,
);
for (const c of cases) {
  const sp = spectrometerAu({
    acceleration_length_m: 0.1,
    drift_length_m: c.D,
    electric_field_v_per_m: 2000,
    magnetic_field_t: c.B,
    t0_ns: 0,
    detector_center_mm: [0, 0],
  });
  const x = new Float32Array(N);
  const y = new Float32Array(N);
  const tof = new Float32Array(N);
  const rnd = createPrng(5);
  for (let i = 0; i < N; i++) {
    const px = rnd.uniform() * 2.4 - 1.2;
    const py = rnd.uniform() * 2.4 - 1.2;
    const ps = rnd.uniform() * 2.4 - 1.2;
    const t = flightTimeAu(ps, sp);
    const [bx, by] = impactPoint(px, py, t, sp);
    x[i] = bohrToMm(bx);
    y[i] = bohrToMm(by);
    tof[i] = auToNs(t);
  }
  const conv = { spectrometer: sp, laserAxis: '+y' as const, gateAu: [-0.1, 0.1] as const };
  let kept = 0;
  const conv_ms = median(
    timeRuns(3, () => {
      const h = emptyHistogram(grid);
      kept = 0;
      for (let a = 0; a < N; a += CHUNK) {
        const b = Math.min(N, a + CHUNK);
        kept += histogramEvents(x.subarray(a, b), y.subarray(a, b), tof.subarray(a, b), conv, grid, h).kept;
      }
    }),
  );
  let sink = 0;
  const read_ms = median(
    timeRuns(3, () => {
      let s = 0;
      for (let i = 0; i < N; i++) s += (x[i] as number) + (y[i] as number) + (tof[i] as number);
      sink = s;
    }),
  );
  const rate = N / (conv_ms / 1e3);
  console.log(
    `  ${c.name.padEnd(40)} ${(rate / 1e6).toFixed(2)}×10⁶ events/s per core (${conv_ms.toFixed(0)} ms; ` +
      `${kept} kept by the ±0.1 a.u. gate); read-only pass ${read_ms.toFixed(0)} ms → ${(conv_ms / read_ms).toFixed(1)} × the read floor` +
      (Number.isFinite(sink) ? '' : ' (!)'),
  );
}
