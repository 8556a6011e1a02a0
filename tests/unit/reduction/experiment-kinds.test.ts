/**
 * Each experiment kind gets only the analysis that applies to it (FORMATS §4; SCIENCE.md §6 for two-colour phase
 * scans, which measure a yield against the ω–2ω phase and have no attoclock lobes). A two-colour scan of the
 * forward model (reduction/synth: a ring whose yield follows the relative phase) must come back with its phase
 * analysis and without lobe results, simple-man directions, adiabatic intensities or lobe-fit warnings.
 */
import { describe, expect, it } from 'vitest';
import { analysisSettingsSchema } from '@/reduction/formats';
import { createScanReducer } from '@/reduction/pipeline';
import { createPrng } from '@/reduction/prng';
import { planScan, renderSignal } from '@/reduction/synth/model';
import { makeMeta } from './helpers/synth';

const LOBE_WORDS = /lobe|simple-man|peak fit|fit window|radial window|bootstrap|Low counts/i;

describe('two-colour phase scans skip the angular-streaking analysis', () => {
  it.each([1, 2])('synth scan (seed %i): phase result, no lobes and no lobe warnings on any step', (seed) => {
    const plan = planScan({ kind: 'two_color_phase', size: 96, steps: 8, periods: 1, counts: 4e4, seed });
    const n = plan.options.size;
    const meta = makeMeta({
      nX: n,
      nY: n,
      nStep: 8,
      experimentKind: 'two_color_phase',
      ellipticity: null,
      helicity: null,
      fieldRatio: plan.options.fieldRatio,
      step: { quantity: 'relative_phase', units: 'rad', values: plan.stepValues },
    });
    const settings = analysisSettingsSchema.parse({ bootstrap: { resamples: 20, seed: 3 } });
    const red = createScanReducer({ meta, calibration: plan.calibration, settings });
    const rng = createPrng(seed);
    const frame = new Float64Array(n * n);
    for (let k = 0; k < 8; k++) {
      renderSignal(plan, k, frame);
      red.addStep(
        k,
        frame.map((v) => rng.poisson(v)),
        null,
      );
    }
    const { result } = red.finish();
    expect(result.phase).not.toBeNull();
    for (const st of result.steps) {
      expect(st.lobes).toEqual([]);
      expect(st.offset_deg).toBeNull();
      expect(st.radius_au).toBeNull();
      expect(st.intensity_from_radius_Wcm2).toBeNull();
      expect(st.total_counts).toBeGreaterThan(0);
    }
    const lobeWarnings = result.warnings.filter((w) => LOBE_WORDS.test(w));
    expect(lobeWarnings, lobeWarnings.join('\n')).toEqual([]);
  });
});
