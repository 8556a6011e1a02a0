/**
 * The synthetic-scan generator: its calibration maps agree with the reduction's own implementation of FORMATS §2
 * (an independent formula, reduction/calibration.ts), the truth follows the simple-man model of reduction/fields.ts
 * with SCIENCE.md check values, the files it writes read back through h5py, and each broken variant gives its own
 * specific message.
 */
import path from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { calibrationMatrix, pixelToMomentumAu } from '@/reduction/calibration';
import { ScanReadError } from '@/reduction/hdf5/problems';
import { openScanFile } from '@/reduction/hdf5/reader';
import type { H5Runtime } from '@/reduction/hdf5/runtime';
import { momentumToPixel, pixelToMomentum, planScan, renderSignal, synthCalibration } from '@/reduction/synth/model';
import { BROKEN_KINDS, writeSynthScan } from '@/reduction/synth/scan-file';
import { makeExample } from '@/scripts/make-example';
import { generatedDir, python, runtime } from './helpers';

let rt: H5Runtime;
beforeAll(async () => {
  rt = await runtime();
});

describe('calibration maps', () => {
  const cal = { ...synthCalibration({ ...planScan({ size: 128 }).options, distort: true }), mirror: true };
  it('pixel → momentum equals reduction/calibration.ts (FORMATS §2 order: mirror, ellipticity, rotation, scale)', () => {
    const map = calibrationMatrix(cal);
    for (const [x, y] of [
      [0, 0],
      [127, 3],
      [40.5, 99.25],
      [64, 64],
    ] as const) {
      const mine = pixelToMomentum(cal, x, y);
      const theirs = pixelToMomentumAu(map, x, y);
      expect(Math.abs(mine[0] - (theirs[0] as number))).toBeLessThan(1e-12);
      expect(Math.abs(mine[1] - (theirs[1] as number))).toBeLessThan(1e-12);
    }
  });
  it('momentumToPixel inverts pixelToMomentum', () => {
    for (const [x, y] of [
      [1, 2],
      [120.5, 7],
      [64, 80],
    ] as const) {
      const [px, py] = pixelToMomentum(cal, x, y);
      const [bx, by] = momentumToPixel(cal, px, py);
      expect(Math.abs(bx - x)).toBeLessThan(1e-9);
      expect(Math.abs(by - y)).toBeLessThan(1e-9);
    }
  });
});

describe('truth', () => {
  it('He, 800 nm, ε = 0.87, 4e14 W/cm²: radius 1.230356 a.u., lobes at −90° and 90° + offset (SCIENCE.md §4.2, §4.3)', () => {
    const plan = planScan({
      kind: 'angular_streaking',
      steps: 3,
      intensityMinWcm2: 2e14,
      intensityMaxWcm2: 4e14,
      offsetDeg: 6,
    });
    const s = plan.steps[2]!;
    expect(s.intensity_Wcm2).toBe(4e14);
    expect(Math.abs((s.radius_au as number) - 1.230356)).toBeLessThan(2e-6);
    expect(s.lobes.map((l) => l.expected_deg)).toEqual([-90, 90]);
    expect(s.lobes.map((l) => l.angle_deg)).toEqual([-84, 96]); // h = +1: offset counter-clockwise
    const h = planScan({ kind: 'angular_streaking', steps: 1, helicity: -1, offsetDeg: 6 }).steps[0]!;
    expect(h.lobes.map((l) => l.angle_deg)).toEqual([84, -96]); // h = −1: SM lobes at +90°, −90°, offset clockwise
  });
  it('an intensity-dependent true offset follows θ(I) = θ_ref (I/I_ref)^−k (Ar, 800 nm: SCIENCE.md §10.7 13.15° → 11.85°)', () => {
    const plan = planScan({
      kind: 'angular_streaking',
      target: 'Ar',
      steps: 2,
      intensityMinWcm2: 1e14,
      intensityMaxWcm2: 2e14,
      offsetDeg: 13.15,
      offsetRefIntensityWcm2: 1e14,
      offsetIntensityExponent: Math.log(13.15 / 11.85) / Math.log(2),
    });
    expect(plan.steps[0]!.offset_deg).toBeCloseTo(13.15, 10);
    expect(plan.steps[1]!.offset_deg).toBeCloseTo(11.85, 10);
    // the lobes carry the same offset from their simple-man directions (−90°, +90° for h = +1)
    for (const l of plan.steps[1]!.lobes) {
      expect(l.angle_deg - (l.expected_deg as number)).toBeCloseTo(plan.steps[1]!.offset_deg!, 9);
    }
    // exponent 0 (the default): the same offset at every step
    const flat = planScan({ kind: 'angular_streaking', steps: 3, offsetDeg: 6 });
    expect(flat.steps.map((st) => st.offset_deg)).toEqual([6, 6, 6]);
  });
  it('bicircular, r = 1, 2e14 W/cm² total: |p_SM| = 0.331368 a.u., lobes at −90°, 30°, 150° + offset (SCIENCE.md §5.4)', () => {
    const s = planScan({ kind: 'bicircular', steps: 1, intensityMinWcm2: 2e14, fieldRatio: 1, offsetDeg: 5 }).steps[0]!;
    expect(Math.abs((s.radius_au as number) - 0.331368)).toBeLessThan(2e-6);
    s.lobes.forEach((l, i) => {
      expect(Math.abs((l.expected_deg as number) - [-90, 30, 150][i]!)).toBeLessThan(1e-9);
      expect(Math.abs(l.angle_deg - [-85, 35, 155][i]!)).toBeLessThan(1e-9);
    });
  });
  it('rendered frames hold the requested expected counts', () => {
    const plan = planScan({ kind: 'bicircular', size: 96, steps: 1, counts: 5e4, distort: true });
    const f = renderSignal(plan, 0, new Float64Array(96 * 96));
    expect(Math.abs(f.reduce((a, b) => a + b, 0) - 5e4)).toBeLessThan(1e-6);
  });
  it('two-colour scans need whole periods with ≥ 3 phases each', () => {
    expect(() => planScan({ kind: 'two_color_phase', steps: 4, periods: 2 })).toThrow('≥ 3 steps per period');
    const p = planScan({ kind: 'two_color_phase', steps: 8, periods: 2 });
    expect(p.stepValues[4]! - p.stepValues[0]!).toBeCloseTo(2 * Math.PI, 12);
  });
});

describe('make-example files', () => {
  it('writes FORMATS §1 that h5py reads: layout, dtype, one gzip chunk per frame, background, truth files', async () => {
    const dir = generatedDir('generator');
    const out = path.join(dir, 'as.h5');
    const truth = await makeExample([
      '--kind',
      'angular_streaking',
      '--out',
      out,
      '--steps',
      '3',
      '--size',
      '64',
      '--counts',
      '3e4',
      '--dtype',
      'uint16',
      '--background',
      '--distort',
      '--seed',
      '4',
    ]);
    const d = python<Record<string, unknown>>(
      `import h5py, json, sys, numpy as np
f = h5py.File(sys.argv[1], 'r'); c = f['/entry/data/counts']; b = f['/entry/background/counts']
print(json.dumps({'shape': c.shape, 'dtype': str(c.dtype), 'chunks': c.chunks, 'compression': c.compression,
  'sum': [float(c[k].sum()) for k in range(c.shape[0])], 'bg': b.shape, 'bgshots': f['/entry/background/shots'][()].tolist(),
  'axes': [a.decode() if isinstance(a, bytes) else a for a in f['/entry/data'].attrs['axes']],
  'nx': f['/entry'].attrs['NX_class'], 'kind': f['/entry/experiment_kind'][()].decode(),
  'step': f['/entry/data/step'][()].tolist(), 'q': f['/entry/data/step'].attrs['quantity'],
  'hel': int(f['/entry/instrument/source/helicity'][()]), 'hdt': str(f['/entry/instrument/source/helicity'].dtype)}))`,
      [out],
    );
    expect(d).toMatchObject({
      shape: [3, 64, 64],
      dtype: 'uint16',
      chunks: [1, 64, 64],
      compression: 'gzip',
      bg: [3, 64, 64],
      bgshots: [500, 550, 600],
      axes: ['step', 'y', 'x'],
      nx: 'NXentry',
      kind: 'angular_streaking',
      step: [2e14, 3.5e14, 5e14],
      q: 'intensity',
      hel: 1,
      hdt: 'int32',
    });
    // signal 3e4 plus a detector background of a few thousand counts (Poisson): within 5 %
    for (const s of d.sum as number[]) expect(s).toBeGreaterThan(3e4);
    expect(truth.calibration.rotation_deg).toBe(4);
    const { readFileSync } = await import('node:fs');
    expect(JSON.parse(readFileSync(path.join(dir, 'as.calibration.json'), 'utf8'))).toEqual(truth.calibration);
    expect(JSON.parse(readFileSync(path.join(dir, 'as.truth.json'), 'utf8')).steps.length).toBe(3);
  });

  it('same seed → same bytes of counts; another seed → different counts', async () => {
    const dir = generatedDir('generator');
    const plan = planScan({ kind: 'image', size: 48, counts: 1e4, seed: 11 });
    writeSynthScan(rt, path.join(dir, 'a.h5'), plan);
    writeSynthScan(rt, path.join(dir, 'b.h5'), plan);
    writeSynthScan(rt, path.join(dir, 'c.h5'), planScan({ kind: 'image', size: 48, counts: 1e4, seed: 12 }));
    const read = (n: string) => {
      const r = openScanFile(rt, path.join(dir, n));
      if (!r.ok) throw new Error('refused');
      const f = Array.from(r.scan.readFrame(0));
      r.scan.close();
      return f;
    };
    expect(read('a.h5')).toEqual(read('b.h5'));
    expect(read('a.h5')).not.toEqual(read('c.h5'));
  });
});

describe('broken variants (--broken): each has its own specific message', () => {
  const expected: Record<
    string,
    { path: string; words: string[] } | { step: number; words: string[] } | { warning: string; words: string[] }
  > = {
    not_hdf5: { path: '(file)', words: ['not an HDF5 file', 'text file'] },
    truncated: { path: '(file)', words: ['truncated HDF5 file', 'superblock records'] },
    missing_wavelength: { path: '/entry/instrument/source/wavelength', words: ['required', 'missing'] },
    missing_entry_class: { path: '/entry@NX_class', words: ['"NXentry"', 'missing'] },
    wrong_counts_rank: { path: '/entry/data/counts', words: ['3-D', '4-D'] },
    absurd_dimensions: { path: '/entry/data/counts', words: ['100000×100000', 'refused before reading'] },
    nan_counts: { step: 1, words: ['step 1', 'NaN'] },
    negative_counts: { step: 2, words: ['step 2', 'negative counts'] },
    bad_helicity: { path: '/entry/instrument/source/helicity', words: ['+1 or −1', 'found 0'] },
    unknown_step_quantity: { path: '/entry/data/step@quantity', words: ['"wavelength"'] },
    wrong_step_units: { path: '/entry/data/step@units', words: ['"W/cm^2"', '"fs"'] },
    bad_ellipticity: { path: '/entry/instrument/source/ellipticity', words: ['[0, 1]', '1.3'] },
    bad_start_time: { path: '/entry/start_time', words: ['ISO 8601', 'yesterday after lunch'] },
    // FORMATS §1: the background is optional content, so a wrong one is ignored with a warning and the scan opens
    background_shape_mismatch: { warning: '/entry/background/counts', words: ['64×64', '56×56', 'ignored'] },
    lz4_compressed: { path: '/entry/data/counts', words: ['unsupported compression: LZ4'] },
  };
  it('covers every kind', () => expect(Object.keys(expected).sort()).toEqual([...BROKEN_KINDS].sort()));

  it.each([...BROKEN_KINDS])('%s', async (kind) => {
    const out = path.join(generatedDir('broken'), `${kind}.h5`);
    await makeExample([
      '--kind',
      'angular_streaking',
      '--out',
      out,
      '--steps',
      '3',
      '--size',
      '64',
      '--counts',
      '1e4',
      '--broken',
      kind,
    ]);
    // lz4 is readable with the plugins: the refusal is checked without them
    const r = openScanFile(rt, out, kind === 'lz4_compressed' ? { acceptedPluginFilters: [] } : {});
    const want = expected[kind]!;
    if ('warning' in want) {
      if (!r.ok) throw new Error(r.problems.map((p) => p.message).join('\n'));
      expect(r.scan.meta.background).toBeNull();
      r.scan.close();
      const w = r.warnings.find((x) => x.startsWith(`${want.warning}: `));
      expect(w, r.warnings.join(' | ')).toBeDefined();
      for (const word of want.words) expect(w).toContain(word);
      return;
    }
    if ('step' in want) {
      if (!r.ok) throw new Error(r.problems.map((p) => p.message).join('\n'));
      let err: unknown = null;
      try {
        for (let k = 0; k <= want.step; k++) r.scan.readFrame(k);
      } catch (e) {
        err = e;
      }
      r.scan.close();
      expect(err).toBeInstanceOf(ScanReadError);
      expect((err as ScanReadError).problem.step).toBe(want.step);
      for (const w of want.words) expect((err as Error).message).toContain(w);
      return;
    }
    expect(r.ok).toBe(false);
    if (r.ok) return;
    const p = r.problems.find((q) => q.path === want.path);
    expect(p, r.problems.map((q) => q.message).join(' | ')).toBeDefined();
    for (const w of want.words) expect(p!.message).toContain(w);
  });
});
