/**
 * MODELS — the model overlays of the comparison page (lib/comparison/models.ts; issue 13): one Coulomb-corrected
 * trajectory per intensity (SCIENCE.md §10.5 procedure: Dormand–Prince 5(4) to 10⁻¹¹ in an 8-cycle cos² pulse, Kepler
 * asymptote) for 20 intensities of He at 800 nm, ε = 0.87, 1–8 × 10¹⁴ W/cm², computed afresh (a new parameter set
 * each repetition, so the in-process cache never answers) and answered again from the cache; the Keldysh–Rutherford
 * estimate and the simple-man line for the same 20 intensities beside them. One process, one core; median of 5.
 * The ensemble (reduction/models/ensemble.ts) is not measured: the page does not offer it yet.
 */
import { modelCurve } from '@/lib/comparison/models';
import { median, row, timeRuns } from './common';

const N = 20;
const base = Array.from({ length: N }, (_, k) => 1e14 * 8 ** (k / (N - 1)));
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
    `trajectory model, ${N} intensities, from the in-process cache`,
    median(cached),
    `${(median(cached) * 1000).toFixed(1)} µs, ${(t / median(cached)).toFixed(0)} × faster`,
  ),
);
console.log(row(`Keldysh–Rutherford estimate, ${N} intensities`, median(kr), `${(median(kr) * 1000).toFixed(1)} µs`));
console.log(row(`simple-man line, ${N} intensities`, median(sm), `${(median(sm) * 1000).toFixed(1)} µs`));
