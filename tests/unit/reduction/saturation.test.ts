/**
 * Saturation warnings (reduction/saturation.ts): the ceilings of the integer dtypes are numpy's `np.iinfo(d).max`
 * (recorded by tests/fixtures/h5py/make_fixtures.py in fixtures.json); the saturated files are written by h5py
 * (sat_uint16_every_pixel.h5: every pixel at 65535; sat_uint16_spot.h5: 16 of 192 pixels per frame at 65535) and
 * reduced through the CLI's code path.
 */
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import type { LobelineResult } from '@/reduction/formats';
import { countSaturated, DTYPE_MAXIMUM, saturationWarning } from '@/reduction/saturation';
import { main } from '@/scripts/reduce';
import { H5PY_DIR } from '../scanfile/helpers';

const fixtures = JSON.parse(readFileSync(path.join(H5PY_DIR, 'fixtures.json'), 'utf8')) as {
  dtype_max: Record<string, number>;
  files: Record<string, { saturated_pixels_per_frame?: number }>;
};

async function reduce(file: string): Promise<LobelineResult> {
  let out = '';
  let err = '';
  const code = await main([path.join(H5PY_DIR, file), '--json'], {
    stdout: (t) => (out += t),
    stderr: (t) => (err += t),
  });
  expect(code, err).toBe(0);
  return JSON.parse(out) as LobelineResult;
}

describe('saturated detector images', () => {
  it('the ceiling of every integer counts dtype is numpy’s iinfo maximum', () => {
    expect(DTYPE_MAXIMUM).toEqual(fixtures.dtype_max);
  });

  it('counts the pixels at the ceiling, skips masked pixels and float data', () => {
    const a = Uint16Array.from([65535, 3, 65535, 65534]);
    expect(countSaturated(a, 'uint16')).toEqual({ saturated: 2, pixels: 4, ceiling: 65535 });
    expect(countSaturated(a, 'uint16', Uint8Array.from([0, 1, 1, 1]))).toEqual({
      saturated: 1,
      pixels: 3,
      ceiling: 65535,
    });
    expect(countSaturated(Float32Array.from([65535]), 'float32')).toBeNull();
    expect(saturationWarning(Uint8Array.from([254, 0]), 'uint8')).toBeNull();
  });

  it('an image with every pixel at 65535 reduces with a saturation warning on every step', async () => {
    const r = await reduce('sat_uint16_every_pixel.h5');
    const w = r.warnings.find((x) => x.startsWith('The detector image is saturated'));
    expect(w, r.warnings.join('\n')).toBeDefined();
    expect(w).toContain('every pixel sits at 65535, the largest uint16 value');
    expect(w).toContain('(steps 0, 1, 2)');
  });

  it('a bright spot at 65535 gets the partial warning (16 of 192 pixels, make_fixtures.py)', async () => {
    expect(fixtures.files['sat_uint16_spot.h5']?.saturated_pixels_per_frame).toBe(16);
    const r = await reduce('sat_uint16_spot.h5');
    expect(r.warnings.some((x) => x.startsWith('Some detector pixels sit at 65535'))).toBe(true);
    expect(r.warnings.some((x) => x.startsWith('The detector image is saturated'))).toBe(false);
  });

  it('an ordinary file of the same layout gets no saturation warning', async () => {
    const r = await reduce('as_uint16_plain_fixed.h5');
    expect(r.warnings.filter((x) => /saturated|65535/.test(x))).toEqual([]);
  });
});
