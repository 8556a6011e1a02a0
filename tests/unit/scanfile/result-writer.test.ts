/**
 * Result-file writer (FORMATS §5) read back by h5py (the HDF Group's library through Debian's /usr/bin/python3):
 * layout, shapes, dtypes, values and the NeXus attributes of the NXdata base class (NIAC: `NX_class`, `signal`,
 * `axes` as a string array, `AXISNAME_indices`, `units`; root/entry `default`).
 */
import path from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import type { LobelineResult } from '@/reduction/formats';
import { ResultFileWriter } from '@/reduction/hdf5/result-writer';
import type { H5Runtime } from '@/reduction/hdf5/runtime';
import { generatedDir, python, runtime } from './helpers';

let rt: H5Runtime;
beforeAll(async () => {
  rt = await runtime();
});

const DUMP = `import h5py, json, sys, numpy as np
out = {}
def conv(v):
    if isinstance(v, bytes): return v.decode()
    if isinstance(v, np.ndarray): return [conv(x) for x in v.tolist()]
    if isinstance(v, (np.integer,)): return int(v)
    if isinstance(v, (np.floating,)): return float(v)
    return v
def visit(name, obj):
    e = {'attrs': {k: conv(v) for k, v in obj.attrs.items()}}
    if isinstance(obj, h5py.Dataset):
        e['shape'] = list(obj.shape); e['dtype'] = str(obj.dtype); e['chunks'] = obj.chunks
        e['compression'] = obj.compression
        if obj.dtype.kind in 'fiu' and obj.size <= 100000: e['data'] = np.asarray(obj[()], dtype='f8').ravel().tolist()
        elif obj.dtype.kind in 'OSU': e['data'] = conv(obj[()]) if obj.shape == () else None
    out['/' + name] = e
with h5py.File(sys.argv[1], 'r') as f:
    out['/'] = {'attrs': {k: conv(v) for k, v in f.attrs.items()}}
    f.visititems(visit)
print(json.dumps(out))`;

type Dump = Record<
  string,
  {
    attrs: Record<string, unknown>;
    shape?: number[];
    dtype?: string;
    chunks?: number[] | null;
    compression?: string | null;
    data?: unknown;
  }
>;

function summary(): LobelineResult {
  return {
    format: 'lobeline.result',
    version: 1,
    input: {
      sha256: 'ab'.repeat(32),
      experiment_kind: 'two_color_phase',
      target: 'Ne',
      wavelength_nm: 800,
      ellipticity: null,
      helicity: null,
      major_axis_angle_deg: 0,
      field_ratio: 0.1,
      shape: [3, 8, 8],
      step_quantity: 'relative_phase',
      step_units: 'rad',
    },
    calibration: {
      center_px: [3.5, 3.5],
      momentum_per_pixel_au: 0.1,
      rotation_deg: 0,
      mirror: false,
      detector_ellipticity: { ratio: 1, axis_deg: 0 },
      bad_pixels: [],
      background: { subtract: true, scale_by: 'shots' },
    } as LobelineResult['calibration'],
    settings: {} as LobelineResult['settings'],
    software: { name: 'lobeline', version: '0.1.0' },
    steps: [],
    phase: null,
    warnings: ['a test sentence with ε and φ'],
  };
}

describe('ResultFileWriter', () => {
  it('writes FORMATS §5 step by step; h5py reads the layout, values and NeXus attributes', () => {
    const file = path.join(generatedDir('result-writer'), 'result.h5');
    const px = [-0.3, -0.1, 0.1, 0.3];
    const py = [-0.2, 0, 0.2];
    const theta = [-90, 0, 90, 180];
    const p = [0.05, 0.15];
    const w = ResultFileWriter.create(rt, file, {
      nStep: 3,
      step: { quantity: 'relative_phase', units: 'rad', values: [0, 2.0943951, 4.1887902] },
      pxAu: px,
      pyAu: py,
      thetaDeg: theta,
      pAu: p,
    });
    // steps in any order; values encode (step, index) so that every element can be checked
    for (const k of [2, 0, 1]) {
      w.writeStep(k, {
        calibrated: Array.from({ length: 12 }, (_, i) => 100 * k + i),
        angular: theta.map((_, i) => 10 * k + i + 0.5),
        radial: p.map((_, i) => -k - i / 4),
      });
    }
    expect(w.missingSteps()).toEqual([]);
    w.writePhase({
      mean: Array.from({ length: 12 }, (_, i) => i),
      amplitude: Array.from({ length: 12 }, (_, i) => i / 2),
      phase_of_max: Array.from({ length: 12 }, (_, i) => -Math.PI + i * 0.5),
      contrast: Array.from({ length: 12 }, () => 0.25),
      harmonic_2_amplitude: Array.from({ length: 12 }, () => 1),
      harmonic_2_phase: Array.from({ length: 12 }, () => 0.125),
    });
    w.writeSummary(summary());
    w.close();

    const d = python<Dump>(DUMP, [file]);
    expect(d['/']?.attrs.default).toBe('entry');
    expect(d['/entry']?.attrs).toMatchObject({ NX_class: 'NXentry', default: 'result' });
    expect(d['/entry/result']?.attrs).toMatchObject({ NX_class: 'NXprocess', default: 'calibrated' });

    const cal = d['/entry/result/calibrated'];
    expect(cal?.attrs).toMatchObject({
      NX_class: 'NXdata',
      signal: 'counts',
      axes: ['step', 'py', 'px'],
      step_indices: 0,
      py_indices: 1,
      px_indices: 2,
    });
    const counts = d['/entry/result/calibrated/counts'];
    expect(counts).toMatchObject({ shape: [3, 3, 4], dtype: 'float32', chunks: [1, 3, 4], compression: 'gzip' });
    expect(counts?.data).toEqual([0, 1, 2].flatMap((k) => Array.from({ length: 12 }, (_, i) => 100 * k + i)));
    expect(d['/entry/result/calibrated/px']).toMatchObject({ data: px, attrs: { units: 'a.u.' } });
    expect(d['/entry/result/calibrated/py']).toMatchObject({ data: py, attrs: { units: 'a.u.' } });
    expect(d['/entry/result/calibrated/step']?.attrs).toEqual({ quantity: 'relative_phase', units: 'rad' });

    expect(d['/entry/result/angular']?.attrs).toMatchObject({
      NX_class: 'NXdata',
      signal: 'yield',
      axes: ['step', 'theta'],
    });
    expect(d['/entry/result/angular/yield']).toMatchObject({ shape: [3, 4], dtype: 'float64' });
    expect(d['/entry/result/angular/yield']?.data).toEqual(
      [0, 1, 2].flatMap((k) => theta.map((_, i) => 10 * k + i + 0.5)),
    );
    expect(d['/entry/result/angular/theta']).toMatchObject({ data: theta, attrs: { units: 'deg' } });
    expect(d['/entry/result/radial']?.attrs).toMatchObject({
      NX_class: 'NXdata',
      signal: 'yield',
      axes: ['step', 'p'],
    });
    expect(d['/entry/result/radial/yield']?.data).toEqual([0, 1, 2].flatMap((k) => p.map((_, i) => -k - i / 4)));
    expect(d['/entry/result/radial/p']).toMatchObject({ data: p, attrs: { units: 'a.u.' } });

    expect(d['/entry/result/phase']?.attrs).toMatchObject({
      NX_class: 'NXdata',
      signal: 'phase_of_max',
      axes: ['py', 'px'],
    });
    for (const name of ['mean', 'amplitude', 'phase_of_max', 'contrast', 'harmonic_2_amplitude', 'harmonic_2_phase']) {
      expect(d[`/entry/result/phase/${name}`]?.shape, name).toEqual([3, 4]);
    }
    expect(d['/entry/result/phase/phase_of_max']?.attrs.units).toBe('rad');
    const pom = d['/entry/result/phase/phase_of_max']?.data as number[];
    // float32 storage: |error| ≤ 2^-24 · |value| (IEEE 754 single precision)
    pom.forEach((v, i) => {
      expect(Math.abs(v - (-Math.PI + i * 0.5))).toBeLessThanOrEqual(4 * 2 ** -24);
    });

    const s = d['/entry/result/summary'];
    expect(JSON.parse(s?.data as string)).toEqual(summary());
    expect(s?.attrs.format).toBe('lobeline.result');
  });

  it('refuses arrays of the wrong length and steps outside the scan, naming them', () => {
    const file = path.join(generatedDir('result-writer'), 'bad.h5');
    const w = ResultFileWriter.create(rt, file, {
      nStep: 1,
      step: { quantity: 'index', units: '1', values: [0] },
      pxAu: [0, 1],
      pyAu: [0, 1],
      thetaDeg: [0],
      pAu: [0],
    });
    expect(() => w.writeStep(1, { calibrated: [1, 2, 3, 4], angular: [1], radial: [1] })).toThrow(
      'step 1 is outside 0…0',
    );
    expect(() => w.writeStep(0, { calibrated: [1, 2, 3], angular: [1], radial: [1] })).toThrow(
      'calibrated has 3 values, expected 4',
    );
    expect(w.missingSteps()).toEqual([0]);
    w.close();
    expect(() => w.writeSummary(summary())).toThrow('already closed');
  });
});
