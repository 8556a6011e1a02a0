/**
 * The bench's three calibration tools as the page runs them (components/bench/tools.ts `runTool`, the worker's
 * entry): on scan files written by the example generator (reduction/synth) and read back through the scan reader,
 * with the generator's truth as the reference — ATI rings with κ = 2×10⁻³ eV/px² (SCIENCE.md §7.1), a background
 * frame with shot ratio 1000/500 = 2 (§7.4), the distorted detector's rotation of 4° (§7.3). Tolerances: the
 * tools' own stated standard errors (k σ as written per check) plus, where said, a small allowance of ours.
 */
import path from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import type { BenchFrame } from '@/components/bench/compute';
import { regionMask, runTool, type ToolAnswer } from '@/components/bench/tools';
import { backgroundScale } from '@/reduction/calibration';
import { type DetectorCalibration, detectorCalibrationSchema } from '@/reduction/formats';
import { openScanFile } from '@/reduction/hdf5/reader';
import { planScan, type ScanPlan, type SynthOptions } from '@/reduction/synth/model';
import { writeSynthScan } from '@/reduction/synth/scan-file';
import { generatedDir, runtime } from '../scanfile/helpers';

const KAPPA = 2e-3;

async function written(name: string, o: Partial<SynthOptions>): Promise<{ plan: ScanPlan; frame: BenchFrame }> {
  const plan = planScan(o);
  const rt = await runtime();
  const file = path.join(generatedDir('bench-scale-tools'), `${name}.h5`);
  writeSynthScan(rt, file, plan, null);
  const r = openScanFile(rt, file);
  if (!r.ok) throw new Error(r.problems.map((q) => q.message).join('; '));
  try {
    return {
      plan,
      frame: { meta: r.scan.meta, step: 0, counts: r.scan.readFrame(0), background: r.scan.readBackground(0) },
    };
  } finally {
    r.scan.close();
  }
}

let ati: { plan: ScanPlan; frame: BenchFrame };
let reference: { plan: ScanPlan; frame: BenchFrame };
let cal: DetectorCalibration;

beforeAll(async () => {
  ati = await written('ati', {
    kind: 'image',
    size: 192,
    counts: 1e5,
    seed: 3,
    distort: true,
    background: 'per_step',
    atiRings: { e0Ev: 0.45, orders: [1, 2, 3, 4, 5], widthAu: 0.012, amplitude: 2, kappaEvPerPx2: KAPPA },
  });
  reference = await written('reference', { kind: 'image', size: 192, counts: 1e5, seed: 4, distort: true });
  cal = detectorCalibrationSchema.parse(ati.plan.calibration);
});

function as<T extends ToolAnswer['tool']>(a: ToolAnswer, tool: T): Extract<ToolAnswer, { tool: T }> {
  expect(a.tool).toBe(tool);
  return a as Extract<ToolAnswer, { tool: T }>;
}

describe('momentum scale from ATI rings (runTool)', () => {
  it('suggests the five rings, and the fit through them gives κ and α within 3 stated σ of the generator', () => {
    const truth = ati.plan.atiRings!;
    const s = as(runTool(ati.frame, cal, 'ring-suggest'), 'ring-suggest');
    const picked = s.suggestions.map((q) => q.radiusPx).filter((r) => truth.radiiPx.some((t) => Math.abs(t - r) < 1.5));
    expect(picked.length).toBe(5);
    // 800 nm: ħω = 1239.841 984 / 800 eV (SCIENCE.md §1.3)
    const hw = 1239.841984 / 800;
    const a = as(
      runTool(ati.frame, cal, 'ati-scale', null, { ati: { guessesPx: picked, firstOrder: 1, photonEnergyEv: hw } }),
      'ati-scale',
    );
    expect(a.kappaErr).toBeGreaterThan(0);
    expect(Math.abs(a.kappa - KAPPA)).toBeLessThan(3 * a.kappaErr);
    expect(Math.abs(a.alpha - ati.plan.calibration.momentum_per_pixel_au)).toBeLessThan(3 * a.alphaErr);
    expect(Math.abs(a.e0 - 0.45)).toBeLessThan(3 * a.e0Err);
    expect(a.rings.map((q) => q.order)).toEqual([1, 2, 3, 4, 5]);
  });

  it('refuses fewer than two rings and names a ring it cannot fit', () => {
    expect(() =>
      runTool(ati.frame, cal, 'ati-scale', null, { ati: { guessesPx: [40], firstOrder: 1, photonEnergyEv: 1.55 } }),
    ).toThrow(/at least two rings/);
  });
});

describe('background scale from marked regions (runTool)', () => {
  it('corner rectangles give k within 3σ of the shot ratio 2, and the pull is reported', () => {
    const rects = [
      { x0: 0, y0: 0, x1: 24, y1: 24 },
      { x0: 167, y0: 167, x1: 191, y1: 191 },
      { x0: 0, y0: 167, x1: 24, y1: 191 },
    ];
    const b = as(runTool(ati.frame, cal, 'background-scale', null, { regions: rects }), 'background-scale');
    expect(b.shotRatio).toBe(2);
    expect(b.pixels).toBe(3 * 25 * 25);
    expect(Math.abs(b.scale - 2)).toBeLessThan(3 * b.err);
    expect(b.pull).not.toBeNull();
    expect(Math.abs(b.pull!)).toBeLessThan(3);
  });

  it('a region over the lobe and rings gives a scale far from the shot ratio, with the warning', () => {
    const [cx, cy] = cal.center_px;
    const rect = { x0: Math.round(cx - 60), y0: Math.round(cy - 60), x1: Math.round(cx + 60), y1: Math.round(cy + 60) };
    const b = as(runTool(ati.frame, cal, 'background-scale', null, { regions: [rect] }), 'background-scale');
    expect(b.scale).toBeGreaterThan(2 + 5 * b.err);
    expect(b.warnings.join(' ')).toMatch(/shot ratio/);
  });

  it('regionMask clips rectangles to the frame and accepts corners in any order', () => {
    const m = regionMask(10, 8, [{ x0: 12, y0: -3, x1: 8, y1: 1 }]);
    const on: number[] = [];
    for (let i = 0; i < m.length; i++) if (m[i]) on.push(i);
    expect(on).toEqual([8, 9, 18, 19]);
  });

  it('the calibration’s fitted factor replaces the shot ratio in the reducer (backgroundScale)', () => {
    const c = detectorCalibrationSchema.parse({
      ...cal,
      background: { subtract: true, scale_by: 'shots', factor: 1.7 },
    });
    expect(backgroundScale(c, 1000, 500)).toBe(1.7);
    expect(backgroundScale({ ...c, background: { subtract: false, scale_by: 'shots', factor: 1.7 } }, 1000, 500)).toBe(
      0,
    );
    expect(backgroundScale(detectorCalibrationSchema.parse(cal), 1000, 500)).toBe(2);
    expect(() => detectorCalibrationSchema.parse({ ...cal, background: { factor: -1 } })).toThrow();
  });
});

describe('rotation from a reference scan (runTool)', () => {
  it('the distorted detector’s 4° from a one-lobe reference at lab angle 40°, within 3σ + 0.1° (ours)', () => {
    const r = as(
      runTool(ati.frame, cal, 'rotation', null, {
        reference: { scanId: 2, frame: reference.frame, labAxisDeg: 40 },
      }),
      'rotation',
    );
    expect(r.err).toBeGreaterThan(0);
    expect(Math.abs(r.rotationDeg - 4)).toBeLessThan(3 * r.err + 0.1);
    expect(r.referenceScanId).toBe(2);
    expect(r.angleDeg.length).toBe(r.counts.length);
  });

  it('refuses a centre outside the reference frame', () => {
    expect(() =>
      runTool(ati.frame, { ...cal, center_px: [500, 10] }, 'rotation', null, {
        reference: { scanId: 2, frame: reference.frame, labAxisDeg: 0 },
      }),
    ).toThrow(/outside the reference frame/);
  });
});
