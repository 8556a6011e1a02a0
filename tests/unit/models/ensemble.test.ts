/**
 * The CTMC-style ensemble (reduction/models/ensemble.ts) against SCIENCE.md §10.7 (He, 800 nm, 4×10¹⁴ W/cm²,
 * ε = 0.87, N = 40 000: most-probable θ_off 5.79°, lobe rms width 31.4°, bound fraction 1.2 %, `sec10c.py`) and
 * against an independent numpy/scipy integration of the same stated recipe (RK4 with Δt ≤ 0.05 a.u., scipy
 * curve_fit), tests/fixtures/numpy/ctmc_ensemble.py → ctmc_ensemble.json.
 *
 * Tolerances come from the seed-to-seed scatter measured with this code at N = 40 000 (8 seeds, He 4×10¹⁴):
 * least-squares fit (the default) offset sd 0.43°, width sd 0.63°; 1/Σw²-weighted fit offset sd 0.12°. A check is
 * 3 sd of the difference. The table's bound fraction (1.2 %) is NOT what the recipe gives (see ensemble.ts): the
 * check here is against the numpy reference (0 of 40 000 to 1 of 40 000).
 */
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { IONIZATION_ENERGIES_EV, omegaAu } from '@/reduction/constants';
import { ellipticalFieldAmplitudes } from '@/reduction/fields';
import { type EnsembleResult, runEnsemble } from '@/reduction/models/ensemble';
import { boundStateOf } from '@/reduction/models/tunnelling';

interface RefCase {
  target: string;
  intensity_wcm2: number;
  wavelength_nm: number;
  seed: number;
  fit_unweighted: { offset_deg: number; width_deg: number };
  fit_weighted_1_over_sum_w2: { offset_deg: number; width_deg: number };
  bound_fraction_weighted: number;
  bound_fraction_of_trajectories: number;
}
const ref = JSON.parse(readFileSync(path.join(__dirname, '../../fixtures/numpy/ctmc_ensemble.json'), 'utf8')) as {
  cases: RefCase[];
};

const SD_OLS_OFFSET = 0.43;
const SD_OLS_WIDTH = 0.63;
const SD_IV_OFFSET = 0.12;

function heCase() {
  const w = omegaAu(800);
  const { fMajorAu } = ellipticalFieldAmplitudes(4e14, 0.87);
  const state = boundStateOf('He', IONIZATION_ENERGIES_EV.He!.ev)!;
  const field = {
    fMajorAu,
    ellipticity: 0.87,
    helicity: 1 as const,
    omegaAu: w,
    envelopeDurationAu: (8 * 2 * Math.PI) / w,
  };
  return { field, state };
}

const numpyHe = ref.cases.filter((c) => c.target === 'He' && c.intensity_wcm2 === 4e14 && c.wavelength_nm === 800);
const mean = (xs: number[]) => xs.reduce((a, b) => a + b, 0) / xs.length;

describe('ensemble, He 800 nm 4×10¹⁴ W/cm², ε = 0.87, N = 40 000 (SCIENCE.md §10.7)', () => {
  const { field, state } = heCase();
  let ols: EnsembleResult;
  beforeAll(() => {
    ols = runEnsemble({ field, state, trajectories: 40_000, seed: 11 });
  }, 180_000);

  it('the numpy reference has three seeds of this case', () => {
    expect(numpyHe.length).toBe(3);
  });

  it('least-squares fit: most-probable offset 5.79° within 3 sd of the seed scatter (§10.7)', () => {
    expect(Math.abs(ols.offsetDeg - 5.79)).toBeLessThan(3 * SD_OLS_OFFSET);
  });

  it('least-squares fit: agrees with the numpy integration (mean of 3 seeds) within 3 sd of the difference', () => {
    const np = mean(numpyHe.map((c) => c.fit_unweighted.offset_deg));
    const sd = Math.sqrt(SD_OLS_OFFSET ** 2 + SD_OLS_OFFSET ** 2 / numpyHe.length);
    expect(Math.abs(ols.offsetDeg - np)).toBeLessThan(3 * sd);
  });

  it('lobe rms width 31.4° (§10.7) within 3 sd, and the numpy width likewise', () => {
    expect(Math.abs(ols.widthDeg - 31.4)).toBeLessThan(3 * SD_OLS_WIDTH);
    const np = mean(numpyHe.map((c) => c.fit_unweighted.width_deg));
    expect(Math.abs(ols.widthDeg - np)).toBeLessThan(3 * Math.sqrt(SD_OLS_WIDTH ** 2 + SD_OLS_WIDTH ** 2 / 3));
  });

  it('bound fraction as in the numpy integration of the recipe (≤ 1 in 10 000), not the table’s 1.2 %', () => {
    for (const c of numpyHe) expect(c.bound_fraction_of_trajectories).toBeLessThan(1e-4);
    expect(ols.boundFractionOfTrajectories).toBeLessThan(1e-4);
    expect(ols.boundFraction).toBeLessThan(1e-6);
  });

  it('1/Σw²-weighted fit: agrees with numpy’s weighted fit', () => {
    const iv = runEnsemble({ field, state, trajectories: 40_000, seed: 11, fitWeighting: 'inverse_variance' });
    const np = numpyHe.map((c) => c.fit_weighted_1_over_sum_w2.offset_deg);
    // the numpy seeds scatter more (sd 0.31° over its 3 seeds) than this code's 0.12°: take the larger for both
    const sd = Math.sqrt(0.31 ** 2 / np.length + SD_IV_OFFSET ** 2);
    expect(Math.abs(iv.offsetDeg - mean(np))).toBeLessThan(3 * sd);
  }, 180_000);
});
