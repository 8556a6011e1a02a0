/**
 * The generator writes a given `/entry/start_time` (the demo files carry the dates of their shifts), read back with
 * Debian's h5py as the outside reader; without one it keeps its fixed default.
 */
import path from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import type { H5Runtime } from '@/reduction/hdf5/runtime';
import { planScan } from '@/reduction/synth/model';
import { writeSynthScan } from '@/reduction/synth/scan-file';
import { generatedDir, python, runtime } from './helpers';

let rt: H5Runtime;
beforeAll(async () => {
  rt = await runtime();
});

const read = (file: string) =>
  python<string>(
    `import h5py, json, sys
with h5py.File(sys.argv[1], 'r') as f:
    v = f['entry/start_time'][()]
    print(json.dumps(v.decode() if isinstance(v, bytes) else str(v)))`,
    [file],
  );

describe('writeSynthScan start time', () => {
  it('writes the start time it is given', () => {
    const file = path.join(generatedDir('start-time'), 'given.h5');
    writeSynthScan(rt, file, planScan({ size: 64, steps: 1 }), null, {}, '2026-11-28T19:40:00.000Z');
    expect(read(file)).toBe('2026-11-28T19:40:00.000Z');
  });
  it('keeps the fixed default otherwise', () => {
    const file = path.join(generatedDir('start-time'), 'default.h5');
    writeSynthScan(rt, file, planScan({ size: 64, steps: 1 }));
    expect(read(file)).toBe('2026-03-14T09:30:00+01:00');
  });
});
