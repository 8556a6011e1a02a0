/**
 * The calibration bench computes in the browser with the server's reducer (components/bench/compute.ts, called by
 * bench.worker.ts). Checked here: on the same raw frame, calibration and settings, the bench at full resolution
 * gives exactly the numbers of the server's reduction job (lib/jobs/engine.ts `runReduction`: every step field
 * compared with ===, every array element bit for bit) after the frame's round trip through the wire format of
 * GET /api/scans/[id]/raw-frame. The file comes from the project's forward model (scripts/make-example.ts) with a
 * background per step and a distorted detector, so the background, ellipticity and rotation paths all run.
 * The downsampled copy is checked against the full-resolution reduction (tolerances: our choice, stated per check)
 * and against bad pixels being excluded.
 */
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { computeBench, downsampleFrame, factorFor } from '@/components/bench/compute';
import { decodeFrame, encodeFloats } from '@/components/bench/wire';
import { runReduction } from '@/lib/jobs/engine';
import {
  type AnalysisSettings,
  analysisSettingsSchema,
  type DetectorCalibration,
  detectorCalibrationSchema,
  type LobelineResult,
} from '@/reduction/formats';
import { openScanPath } from '@/reduction/hdf5/node';
import type { ScanFile } from '@/reduction/hdf5/reader';
import { createScanReducer, type StepArrays } from '@/reduction/pipeline';
import { makeExample } from '@/scripts/make-example';
import { generatedDir } from '../scanfile/helpers';

const dir = generatedDir('bench-compute');
const file = path.join(dir, 'streaking.h5');
let scan: ScanFile;
let calibration: DetectorCalibration;
let settings: AnalysisSettings;
let server: LobelineResult;
const serverArrays = new Map<number, StepArrays>();

beforeAll(async () => {
  await makeExample([
    '--kind',
    'angular_streaking',
    '--out',
    file,
    '--steps',
    '3',
    '--size',
    '128',
    '--counts',
    '60000',
    '--background',
    'per_step',
    '--distort',
  ]);
  calibration = detectorCalibrationSchema.parse({
    ...JSON.parse(readFileSync(file.replace(/\.h5$/, '.calibration.json'), 'utf8')),
    bad_pixels: [
      [3, 4],
      [70, 61],
    ],
  });
  settings = analysisSettingsSchema.parse({ bootstrap: { resamples: 12, seed: 99 } });
  const opened = await openScanPath(file);
  if (!opened.ok) throw new Error(opened.problems.map((p) => p.message).join('; '));
  scan = opened.scan;
  ({ result: server } = await runReduction({
    scan,
    calibration,
    settings,
    sha256: null,
    outPath: path.join(dir, 'result.h5'),
  }));
  // the arrays the job writes into the result file, from the same reducer the job runs
  const reducer = createScanReducer({
    meta: scan.meta,
    calibration,
    settings,
    onStepArrays: (k, a) => serverArrays.set(k, a),
  });
  for (let k = 0; k < scan.meta.shape.nStep; k++) reducer.addStep(k, scan.readFrame(k), scan.readBackground(k));
}, 120_000);

/** The frame as the bench receives it: encoded by the route, decoded by the page. */
function wireFrame(k: number) {
  const counts = scan.readFrame(k);
  const bg = scan.readBackground(k);
  return decodeFrame({
    scanId: 1,
    sha256: '',
    step: k,
    meta: JSON.parse(JSON.stringify(scan.meta)),
    counts: encodeFloats(counts),
    background: bg ? encodeFloats(bg) : null,
  });
}

describe('bench at full resolution = the server reduction job', () => {
  it('every step: the same lobes, offsets, radii, intensities and errors (exact, ===)', () => {
    expect(server.steps).toHaveLength(3);
    for (let k = 0; k < 3; k++) {
      const out = computeBench(wireFrame(k), { calibration, settings, factor: 1, bootstrap: true });
      // exact: toStrictEqual compares every number with Object.is
      expect(out.step).toStrictEqual(server.steps[k]);
      expect(out.step.offset_err_deg).not.toBeNull(); // the bootstrap ran on both sides
      expect(out.settings).toStrictEqual(server.settings);
    }
  });
  it('the calibrated image, the angular distribution and dN/dp bit for bit', () => {
    for (let k = 0; k < 3; k++) {
      const out = computeBench(wireFrame(k), { calibration, settings, factor: 1, bootstrap: true });
      const a = serverArrays.get(k)!;
      expect(Buffer.from(out.image.buffer).equals(Buffer.from(a.calibrated.buffer))).toBe(true);
      expect(Buffer.from(out.angular.buffer).equals(Buffer.from(a.angular.buffer))).toBe(true);
      expect(Buffer.from(out.radial.buffer).equals(Buffer.from(a.radial.buffer))).toBe(true);
    }
  });
  it('without the bootstrap (the live view) the lobe fits stay the same; the step offset is their plain mean', () => {
    const out = computeBench(wireFrame(1), { calibration, settings, factor: 1, bootstrap: false });
    const s = server.steps[1]!;
    expect(out.step.lobes.map((l) => l.angle_deg)).toEqual(s.lobes.map((l) => l.angle_deg));
    expect(out.step.lobes.map((l) => l.radius_au)).toEqual(s.lobes.map((l) => l.radius_au));
    expect(out.step.radius_au).toBe(s.radius_au);
    // without bootstrap errors the reducer weights the lobes equally (reduction/pipeline.ts)
    const offsets = out.step.lobes.map((l) => l.offset_deg!);
    expect(out.step.offset_deg).toBeCloseTo(offsets.reduce((a, b) => a + b, 0) / offsets.length, 12);
    expect(out.step.lobes.map((l) => l.angle_fit_err_deg)).toEqual(s.lobes.map((l) => l.angle_fit_err_deg));
    expect(out.step.offset_err_deg).toBeNull();
  });
});

describe('the downsampled copy', () => {
  it('keeps every count that is not excluded (background subtracted, bad pixels out)', () => {
    const f = wireFrame(0);
    const d = downsampleFrame(f, calibration, 2);
    const bgShots = scan.meta.background!.shots[0]!;
    const k = scan.meta.shots[0]! / bgShots;
    let want = 0;
    const bad = new Set(calibration.bad_pixels.map(([x, y]) => y * 128 + x));
    for (let p = 0; p < f.counts.length; p++) if (!bad.has(p)) want += f.counts[p]! - k * f.background![p]!;
    const got = d.counts.reduce((a, b) => a + b, 0);
    expect(Math.abs(got - want)).toBeLessThan(1e-9 * Math.abs(want));
    expect(d.meta.shape).toMatchObject({ nX: 64, nY: 64 });
    expect(d.meta.xAxis![0]).toBe(0.5); // centre of pixels 0 and 1
  });
  it('gives the full-resolution offset and radius within 3 combined fit errors (2 × 2 blocks of a 128² frame)', () => {
    const full = computeBench(wireFrame(2), { calibration, settings, factor: 1, bootstrap: false }).step;
    const half = computeBench(wireFrame(2), { calibration, settings, factor: 2, bootstrap: false }).step;
    const err = full.offset_fit_err_deg!;
    expect(err).toBeGreaterThan(0);
    expect(Math.abs(half.offset_deg! - full.offset_deg!)).toBeLessThan(3 * Math.SQRT2 * err);
    // radius: within 1 % (half a ring of the default 0.01 a.u. grid at r ≈ 1 a.u.)
    expect(Math.abs(half.radius_au! / full.radius_au! - 1)).toBeLessThan(0.01);
  });
  it('factorFor brings the larger side to at most the given size', () => {
    expect(factorFor(1024, 1024, 256)).toBe(4);
    expect(factorFor(512, 300, 256)).toBe(2);
    expect(factorFor(200, 200, 256)).toBe(1);
  });
});

describe('the fitting tools in the bench worker (reduction/bench on the corrected raw frame)', () => {
  it('the symmetry centre finder, started 4 px off, returns the generator’s centre within 3 σ + 0.1 px', async () => {
    const { runTool } = await import('@/components/bench/tools');
    const start = {
      ...calibration,
      center_px: [calibration.center_px[0] + 4, calibration.center_px[1] - 2] as [number, number],
    };
    const a = runTool(wireFrame(2), start, 'centre');
    if (a.tool !== 'centre') throw new Error('wrong tool');
    // angular streaking: inversion symmetry is the valid method (SCIENCE.md §7.2 table)
    expect(a.symmetry).toBe('inversion');
    expect(a.errX).toBeGreaterThan(0);
    expect(Math.abs(a.x - calibration.center_px[0])).toBeLessThan(3 * a.errX + 0.1);
    expect(Math.abs(a.y - calibration.center_px[1])).toBeLessThan(3 * a.errY + 0.1);
  });
  it('a kind without a valid symmetry gets the reason instead of a centre', async () => {
    const { runTool } = await import('@/components/bench/tools');
    const f = wireFrame(0);
    expect(() => runTool({ ...f, meta: { ...f.meta, experimentKind: 'image' } }, calibration, 'centre')).toThrow(
      /no guaranteed symmetry/,
    );
  });
});

describe('the ring tools in the bench worker', () => {
  it('the circle fit finds the generator’s centre within 3 σ; the ellipse fit carries the §7.3 caution for elliptical light', async () => {
    const { runTool } = await import('@/components/bench/tools');
    const f = wireFrame(2);
    const out = computeBench(f, { calibration, settings, factor: 1, bootstrap: false });
    const ringPx = out.step.radius_au! / calibration.momentum_per_pixel_au;
    const ring = runTool(f, calibration, 'ring', ringPx);
    const ell = runTool(f, calibration, 'ellipse', ringPx);
    if (ring.tool !== 'ring' || ell.tool !== 'ellipse') throw new Error('wrong tool');
    expect(ring.errX).toBeGreaterThan(0);
    expect(Math.abs(ring.x - calibration.center_px[0])).toBeLessThan(3 * ring.errX);
    expect(Math.abs(ring.y - calibration.center_px[1])).toBeLessThan(3 * ring.errY);
    // SCIENCE.md §7.3: the torus of light that is not circular is no round feature
    expect(ell.warnings.join(' ')).toMatch(/not round/);
    expect(() => runTool(f, calibration, 'ring', null)).toThrow(/has not found a radius/);
  });
});
