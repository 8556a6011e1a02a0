// DEMO DATA: the generation plan of scripts/demo-neon.ts (two invented neon campaigns at 800 nm for the fictional
// Harbor Point lab). Not a check of the physics: the trajectory model itself is checked against SCIENCE.md §10 in
// tests/unit/reduction. Here the generator's truth (reduction/synth/model.ts planScan, the per-step offsets it plants)
// must equal what the demo promises: 2026 on the trajectory model's own numbers for Ne, 800 nm, ε = 0.87, and 2025
// the same plus the stated excess — so the kept comparison tells the story it claims.
import { describe, expect, it } from 'vitest';
import { modelCurve } from '@/lib/comparison/models';
import { intensityFromRadiusWcm2 } from '@/reduction/fields';
import { planScan } from '@/reduction/synth/model';
import {
  CAMPAIGN_2025,
  CAMPAIGN_2026,
  NEON,
  NEON_2025_EXCESS_DEG,
  NEON_2025_V1_SCALE,
  PLAN_TOLERANCE_DEG,
  planNeonFiles,
} from '../../../scripts/demo-neon';
import { DEMO_CALIBRATION_INPUT } from '../../../scripts/seed';

const files = await planNeonFiles();

/** The generator's truth of a planned file next to the model evaluated independently at its step intensities. */
function truthAndModel(f: (typeof files)[number]) {
  const plan = planScan({ size: 512, dtype: 'float32', ...f.options });
  const intensities = plan.steps.map((s) => s.intensity_Wcm2 as number);
  const model = modelCurve({ model: 'trajectory', ...NEON, intensitiesWcm2: intensities }).points.map(
    (p) => p.offsetDeg as number,
  );
  return { plan, intensities, truth: plan.steps.map((s) => s.offset_deg as number), model };
}

describe('demo neon campaigns: generation plan (invented demo data)', () => {
  it('plans several 5–6-step intensity scans between 1 and 6 × 10¹⁴ W/cm² in each campaign', () => {
    for (const name of [CAMPAIGN_2025, CAMPAIGN_2026]) {
      const mine = files.filter((f) => f.campaign === name);
      expect(mine.length).toBeGreaterThanOrEqual(3);
      for (const f of mine) {
        const { intensities } = truthAndModel(f);
        expect(intensities.length).toBeGreaterThanOrEqual(5);
        expect(intensities.length).toBeLessThanOrEqual(6);
        expect(Math.min(...intensities)).toBeGreaterThanOrEqual(1e14);
        expect(Math.max(...intensities)).toBeLessThanOrEqual(6e14);
        expect(f.options).toMatchObject({ target: 'Ne', wavelengthNm: 800, ellipticity: 0.87 });
      }
    }
    expect(new Set(files.map((f) => f.fileName)).size).toBe(files.length);
    expect(new Set(files.map((f) => f.options.seed)).size).toBe(files.length);
  });

  it('plants the 2026 offsets on the trajectory model’s numbers (step by step)', () => {
    for (const f of files.filter((x) => x.campaign === CAMPAIGN_2026)) {
      const { truth, model } = truthAndModel(f);
      truth.forEach((t, k) => {
        expect(Math.abs(t - model[k]!)).toBeLessThanOrEqual(PLAN_TOLERANCE_DEG);
      });
      // the model's neon offsets at 800 nm are a few degrees and fall with intensity: a non-trivial curve to follow
      expect(model[0]!).toBeGreaterThan(model[model.length - 1]!);
      expect(Math.min(...model)).toBeGreaterThan(3);
    }
  });

  it(`plants the 2025 offsets ${NEON_2025_EXCESS_DEG}° above the model, step by step`, () => {
    for (const f of files.filter((x) => x.campaign === CAMPAIGN_2025)) {
      const { truth, model } = truthAndModel(f);
      truth.forEach((t, k) => {
        expect(Math.abs(t - model[k]! - NEON_2025_EXCESS_DEG)).toBeLessThanOrEqual(PLAN_TOLERANCE_DEG);
      });
    }
    // a difference a PI sees at a glance: more than 1° (the model's own fall from 1 to 6 × 10¹⁴ W/cm²)
    expect(NEON_2025_EXCESS_DEG).toBeGreaterThanOrEqual(1);
  });

  it('draws every file on the seeded demo detector, so calibration v2 (and 2026 v1) reduce to the truth', () => {
    for (const f of files) {
      const { plan } = truthAndModel(f);
      expect(plan.calibration.momentum_per_pixel_au).toBeCloseTo(DEMO_CALIBRATION_INPUT.momentum_per_pixel_au, 12);
      expect(plan.calibration.center_px).toEqual(DEMO_CALIBRATION_INPUT.center_px);
      expect(plan.calibration.rotation_deg).toBe(DEMO_CALIBRATION_INPUT.rotation_deg);
    }
  });

  it('gives the 2025 calibration v1 a momentum scale that lifts the in-situ intensity by ≈ 5 % (I ∝ p²)', () => {
    const f = files.find((x) => x.campaign === CAMPAIGN_2025)!;
    const { plan } = truthAndModel(f);
    const step = plan.steps[2]!;
    const biased = intensityFromRadiusWcm2({
      kind: 'angular_streaking',
      radiusAu: (step.radius_au as number) * NEON_2025_V1_SCALE,
      wavelengthNm: 800,
      ellipticity: 0.87,
      fieldRatio: null,
    });
    const ratio = (biased as number) / (step.intensity_from_radius_Wcm2 as number);
    expect(ratio).toBeCloseTo(NEON_2025_V1_SCALE ** 2, 6);
    expect(ratio).toBeGreaterThan(1.04);
    expect(ratio).toBeLessThan(1.06);
  });

  it('the generator refuses per-step offsets that do not match its steps', () => {
    const f = files[0]!;
    expect(() => planScan({ ...f.options, offsetsDeg: [6, 7] })).toThrow(/one finite offset per step/);
  });
});
