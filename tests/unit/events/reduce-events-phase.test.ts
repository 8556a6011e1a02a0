/**
 * Two-colour phase scans recorded as event lists (FORMATS §1.1; SCIENCE.md §6): the per-pixel phase analysis of the
 * image reducer runs on the virtual frames of the event reducer unchanged. Truth: the generator's phase of maximum
 * yield per momentum (reduction/synth/model.ts `truePhaseOfMax`); a cell's φ₀ must lie within 3σ of it, with
 * σ(φ₀) ≈ √(2A₀/N)/A₁ (SCIENCE §6.2) — the check of tests/unit/cli/reduce.test.ts for image files, on events.
 */
import path from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { wrapRad } from '@/reduction/angles';
import { createEventReducer } from '@/reduction/events/reduce-events';
import { analysisSettingsSchema, detectorCalibrationSchema } from '@/reduction/formats';
import { openEventFileOrThrow } from '@/reduction/hdf5/event-reader';
import type { H5Runtime } from '@/reduction/hdf5/runtime';
import { writeSynthEventScan } from '@/reduction/synth/event-file';
import { type PhaseTruth, planScan, truePhaseOfMax } from '@/reduction/synth/model';
import { generatedDir, runtime } from '../scanfile/helpers';

let rt: H5Runtime;
beforeAll(async () => {
  rt = await runtime();
});

describe('two-colour phase event files', () => {
  it('give phase-of-maximum maps that match the generator truth within 3σ', () => {
    const file = path.join(generatedDir('reduce-events'), 'phase-12.h5');
    const plan = planScan({ kind: 'two_color_phase', steps: 12, periods: 2, size: 128, counts: 5e5, seed: 2 });
    // laser along +s: the image plane is (p_x, p_y), the generator's own momentum plane
    writeSynthEventScan(rt, file, plan, { laserAxis: '+s', dtype: 'float32' });
    const scan = openEventFileOrThrow(rt, file);
    let out: ReturnType<ReturnType<typeof createEventReducer>['finish']>;
    let axes: ReturnType<typeof createEventReducer>['axes'];
    try {
      const r = createEventReducer({
        meta: scan.meta,
        spectrometer: scan.events.spectrometer,
        calibration: detectorCalibrationSchema.parse({ center_px: [0, 0], momentum_per_pixel_au: 1 }),
        settings: analysisSettingsSchema.parse({
          grid: { p_max_au: 2, n: 201 },
          phase: { min_counts: 50, harmonics: 2 },
          events: { laser_axis: '+s', gate_au: null },
        }),
      });
      axes = r.axes;
      for (let k = 0; k < scan.meta.shape.nStep; k++) {
        for (const c of scan.stepChunks(k, 1_000_000)) r.addChunk(k, c);
        r.finishStep(k);
      }
      out = r.finish();
    } finally {
      scan.close();
    }
    expect(out.result.phase?.method).toBe('fourier');
    expect(out.result.phase?.n_phases).toBe(12);
    const maps = out.phaseMaps!;
    const t = plan.phase as PhaseTruth;
    const n = axes.pxAu.length;
    let checked = 0;
    let within = 0;
    for (let iy = 0; iy < n; iy++) {
      for (let ix = 0; ix < n; ix++) {
        const i = iy * n + ix;
        const a0 = maps.mean[i]!;
        const a1 = maps.amplitude[i]!;
        const px = axes.pxAu[ix]!;
        const py = axes.pyAu[iy]!;
        if (!(a0 > 100) || Math.abs(px) < 0.03) continue; // high counts; away from the px = 0 phase jump
        const sigma = Math.sqrt((2 * a0) / 12) / a1;
        if (!(sigma < 0.3)) continue;
        checked++;
        if (Math.abs(wrapRad(maps.phase_of_max[i]! - truePhaseOfMax(t, px, py))) <= 3 * sigma) within++;
      }
    }
    expect(checked).toBeGreaterThan(200);
    // event cells are independent Poisson counts: 99.7 % inside 3σ for a Gaussian, 98 % allowed
    expect(within / checked).toBeGreaterThan(0.98);
  });
});
