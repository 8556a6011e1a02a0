/**
 * The scan-file reader against reference files written by the HDF Group's library through h5py
 * (tests/fixtures/h5py/make_fixtures.py, run with Debian's /usr/bin/python3): every metadata value, every frame
 * and background frame must equal what h5py wrote (fixtures.json), and each broken file must give its own message
 * naming the path and the rule (FORMATS §1).
 */
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { ScanReadError } from '@/reduction/hdf5/problems';
import { openScanFile } from '@/reduction/hdf5/reader';
import type { H5Runtime } from '@/reduction/hdf5/runtime';
import { H5PY_DIR, runtime } from './helpers';

interface FixtureFile {
  file: string;
  valid: boolean;
  kind?: string;
  dtype?: string;
  strings?: string;
  frames?: number[][][];
  background?: { layout: 'single' | 'per_step'; frames: number[][][] } | null;
  problems?: { path: string; words: string[] }[];
  read_error?: { step: number; words: string[] };
  tolerated?: boolean;
  warnings?: { path: string; words: string[] }[];
  meta?: Record<string, unknown>;
}

const fixtures = JSON.parse(readFileSync(path.join(H5PY_DIR, 'fixtures.json'), 'utf8')) as {
  shape: [number, number];
  files: Record<string, FixtureFile>;
};
const entries = Object.entries(fixtures.files);
const validFiles = entries.filter(([, f]) => f.valid && f.frames !== undefined && !f.tolerated);
const toleratedFiles = entries.filter(([, f]) => f.tolerated === true);
const refused = entries.filter(([, f]) => !f.valid);
const frameErrors = entries.filter(([, f]) => f.read_error !== undefined);

let rt: H5Runtime;
beforeAll(async () => {
  rt = await runtime();
});

/** Metadata values the generator writes (source: make_fixtures.py, `write_scan`). */
function expectedMeta(f: FixtureFile) {
  const kind = f.kind ?? 'angular_streaking';
  const image = kind === 'image';
  return {
    experimentKind: kind,
    startTime: '2026-03-14T09:30:00+01:00',
    title: `Harbor Point fixture ${f.file}`,
    target: image ? 'CH3I' : 'Ar',
    ionizationEnergyEv: image ? 9.54 : null,
    wavelengthNm: image ? 1300 : 800,
    ellipticity: kind === 'angular_streaking' ? 0.87 : null,
    helicity: kind === 'angular_streaking' ? 1 : kind === 'bicircular' ? -1 : null,
    majorAxisAngleDeg: kind === 'angular_streaking' ? 12.5 : 0,
    fieldRatio: kind === 'bicircular' ? 0.8 : kind === 'two_color_phase' ? 0.12 : null,
    relativePhaseRad: kind === 'bicircular' ? 0.5 : 0,
    pulseDurationFs: 25,
    intensityConvention: 'cycle_averaged_total',
    delaySign: kind === 'two_color_phase' ? 1 : -1,
    detectorDescription: 'fixture VMI, 12x16 pixels',
    nominalMomentumPerPixelAu: 0.125,
    countsDtype: f.dtype,
    countsIs3d: !image,
  };
}

describe('valid h5py files: every value read back', () => {
  it('covers every counts dtype of FORMATS §1 and both string kinds', () => {
    const dtypes = new Set(validFiles.map(([, f]) => f.dtype));
    for (const d of ['uint8', 'uint16', 'uint32', 'int16', 'int32', 'float32', 'float64']) expect(dtypes).toContain(d);
    expect(new Set(validFiles.map(([, f]) => f.strings))).toEqual(new Set(['vlen', 'fixed']));
  });

  it.each(validFiles)('%s', (name, f) => {
    const r = openScanFile(rt, path.join(H5PY_DIR, name));
    if (!r.ok) throw new Error(r.problems.map((p) => p.message).join('\n'));
    const scan = r.scan;
    try {
      expect(scan.meta).toMatchObject(expectedMeta(f));
      const frames = f.frames as number[][][];
      const [ny, nx] = fixtures.shape;
      expect(scan.meta.shape).toEqual({ nStep: frames.length, nY: ny, nX: nx });
      // pixel axes and shots (make_fixtures.py: x = 0…15, y = 0…11 "pixel"; shots 1000 + 10k)
      expect(scan.meta.xAxis).toEqual(Array.from({ length: nx }, (_, i) => i));
      expect(scan.meta.yAxis).toEqual(Array.from({ length: ny }, (_, i) => i));
      if (f.kind === 'image') {
        expect(scan.meta.step).toEqual({ quantity: 'index', units: '1', values: [0] });
        expect(scan.meta.shots).toEqual([1]);
      } else {
        expect(scan.meta.shots).toEqual(frames.map((_, k) => 1000 + 10 * k));
        if (f.kind === 'two_color_phase') {
          expect(scan.meta.step.quantity).toBe('relative_phase');
          expect(scan.meta.step.values).toEqual([0, Math.PI / 2, Math.PI, (3 * Math.PI) / 2]);
        } else {
          expect(scan.meta.step).toEqual({ quantity: 'intensity', units: 'W/cm^2', values: [2e14, 3e14, 4e14] });
        }
      }
      // every frame, exactly (integers and float32 values are exact in float64)
      const out = new Float64Array(ny * nx);
      frames.forEach((frame, k) => {
        scan.readFrame(k, out);
        expect(Array.from(out)).toEqual(frame.flat());
      });
      if (f.background) {
        expect(scan.meta.background?.layout).toBe(f.background.layout);
        expect(scan.meta.background?.shots).toEqual(
          f.background.layout === 'single' ? [5000] : frames.map((_, k) => 500 + k),
        );
        frames.forEach((_, k) => {
          const b = scan.readBackground(k);
          const want = f.background!.frames[f.background!.layout === 'single' ? 0 : k] as number[][];
          expect(Array.from(b as Float64Array)).toEqual(want.flat());
        });
      } else {
        expect(scan.meta.background).toBeNull();
        expect(scan.readBackground(0)).toBeNull();
      }
    } finally {
      scan.close();
    }
  });

  it('lists extra content and keeps going (as_uint8_gzip_shuffle_vlen.h5 has an operator log)', () => {
    const r = openScanFile(rt, path.join(H5PY_DIR, 'as_uint8_gzip_shuffle_vlen.h5'));
    if (!r.ok) throw new Error('refused');
    expect(r.scan.meta.extraPaths).toEqual([
      '/calibration_scratch',
      '/entry/instrument/detector/mcp_voltage',
      '/entry/operator_log',
      '/entry/operator_log/text',
    ]);
    expect(r.scan.meta.countsFilters).toEqual(['shuffle', 'gzip/deflate']);
    expect(r.scan.meta.countsChunks).toEqual([1, 12, 16]);
    r.scan.close();
  });

  it('reads a file whose superblock sits after a 512-byte user block (HDF5 spec: signature at 0, 512, 1024, …)', () => {
    const bytes = readFileSync(path.join(H5PY_DIR, 'as_float64_plain_userblock.h5'));
    expect(bytes.subarray(0, 8).toString('latin1')).not.toContain('HDF');
    expect(bytes.subarray(512, 516).toString('latin1')).toBe('\x89HDF');
    const r = openScanFile(rt, path.join(H5PY_DIR, 'as_float64_plain_userblock.h5'));
    expect(r.ok).toBe(true);
    if (r.ok) r.scan.close();
  });

  it('refuses a step outside the scan and an output array of the wrong length', () => {
    const r = openScanFile(rt, path.join(H5PY_DIR, 'as_uint16_plain_fixed.h5'));
    if (!r.ok) throw new Error('refused');
    expect(() => r.scan.readFrame(3)).toThrow(/step 3 does not exist \(the scan has 3 steps\)/);
    expect(() => r.scan.readFrame(0, new Float64Array(5))).toThrow(/output array has 5 elements, a frame has 192/);
    r.scan.close();
    expect(() => r.scan.readFrame(0)).toThrow(/already closed/);
  });
});

describe('unusable optional content (FORMATS §1): ignored with a warning naming path and rule, the scan opens', () => {
  it('has the fixtures (make_fixtures.py, `tolerated`)', () => {
    expect(toleratedFiles.map(([n]) => n).sort()).toEqual(['opt_background_shape.h5', 'opt_other_group_software.h5']);
  });

  it.each(toleratedFiles)('%s', (name, f) => {
    const r = openScanFile(rt, path.join(H5PY_DIR, name));
    if (!r.ok) throw new Error(r.problems.map((p) => p.message).join('\n'));
    try {
      // one warning per unusable field, each starting with the path and carrying the rule's words
      const want = f.warnings ?? [];
      const ignored = r.warnings.filter((w) => w.includes('optional, so it was ignored'));
      expect(ignored.length, ignored.join(' | ')).toBe(want.length);
      for (const w of want) {
        const hit = ignored.find((x) => x.startsWith(`${w.path}: `) && w.words.every((word) => x.includes(word)));
        expect(
          hit,
          `${name}: expected a warning at ${w.path} with ${JSON.stringify(w.words)}, got ${ignored.join(' | ')}`,
        ).toBeDefined();
      }
      // the defaults of FORMATS §1 stand in for what was ignored; the required values are those h5py wrote
      expect(scan(r).meta).toMatchObject({
        ...f.meta,
        wavelengthNm: 800,
        target: 'Ar',
        helicity: 1,
        ellipticity: 0.87,
      });
      // every frame still equals what h5py wrote
      const frames = f.frames as number[][][];
      const out = new Float64Array(fixtures.shape[0] * fixtures.shape[1]);
      frames.forEach((frame, k) => {
        scan(r).readFrame(k, out);
        expect(Array.from(out)).toEqual(frame.flat());
      });
    } finally {
      scan(r).close();
    }
  });

  it("lists the other group's own extra group as extra content", () => {
    const r = openScanFile(rt, path.join(H5PY_DIR, 'opt_other_group_software.h5'));
    if (!r.ok) throw new Error('refused');
    expect(r.scan.meta.extraPaths).toEqual(
      expect.arrayContaining(['/entry/acquisition_settings', '/entry/acquisition_settings/exposure']),
    );
    r.scan.close();
  });

  it('the same defects on required content still refuse, naming path and rule', () => {
    const noUnits = openScanFile(rt, path.join(H5PY_DIR, 'bad_wavelength_no_units.h5'));
    expect(noUnits.ok ? [] : noUnits.problems.map((p) => p.message)).toEqual([
      '/entry/instrument/source/wavelength@units: required: must be "nm" but missing',
    ]);
    const asText = openScanFile(rt, path.join(H5PY_DIR, 'bad_ellipticity_string.h5'));
    expect(asText.ok).toBe(false);
    if (!asText.ok) expect(asText.problems[0]?.path).toBe('/entry/instrument/source/ellipticity');
  });
});

function scan(r: ReturnType<typeof openScanFile>) {
  if (!r.ok) throw new Error('refused');
  return r.scan;
}

describe('broken h5py files: refused with every problem, each naming path and rule', () => {
  it.each(refused)('%s', (name, f) => {
    const r = openScanFile(rt, path.join(H5PY_DIR, name));
    expect(r.ok).toBe(false);
    if (r.ok) return;
    const want = f.problems ?? [];
    expect(r.problems.length).toBe(want.length);
    for (const w of want) {
      const p = r.problems.find((q) => q.path === w.path && w.words.every((word) => q.message.includes(word)));
      const got = r.problems.map((q) => q.message).join(' | ');
      expect(p, `${name}: expected a problem at ${w.path} with ${JSON.stringify(w.words)}, got ${got}`).toBeDefined();
      expect(p!.message.startsWith(`${w.path}: `)).toBe(true);
    }
  });

  it('gives a different message for every broken file', () => {
    const messages = refused.map(([name]) => {
      const r = openScanFile(rt, path.join(H5PY_DIR, name));
      return r.ok ? '' : r.problems.map((p) => p.message).join('\n');
    });
    expect(new Set(messages).size).toBe(messages.length);
  });

  it('names the wavelength rule in operator words (the example of the brief)', () => {
    const r = openScanFile(rt, path.join(H5PY_DIR, 'bad_missing_wavelength.h5'));
    expect(r.ok ? [] : r.problems.map((p) => p.message)).toEqual([
      '/entry/instrument/source/wavelength: required for every scan (fundamental wavelength in nm) but missing',
    ]);
  });

  it('still lists extra content of a refused file', () => {
    const r = openScanFile(rt, path.join(H5PY_DIR, 'bad_missing_entry.h5'));
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.extraPaths).toContain('/scan');
  });
});

describe('frame-level problems: metadata valid, the bad step is named on read', () => {
  it.each(frameErrors)('%s', (name, f) => {
    const r = openScanFile(rt, path.join(H5PY_DIR, name));
    if (!r.ok) throw new Error(r.problems.map((p) => p.message).join('\n'));
    const { step, words } = f.read_error!;
    try {
      for (let k = 0; k < step; k++) expect(() => r.scan.readFrame(k)).not.toThrow();
      let caught: unknown = null;
      try {
        r.scan.readFrame(step);
      } catch (err) {
        caught = err;
      }
      expect(caught).toBeInstanceOf(ScanReadError);
      const p = (caught as ScanReadError).problem;
      expect(p.step).toBe(step);
      expect(p.path).toBe('/entry/data/counts');
      for (const w of words) expect(p.message).toContain(w);
    } finally {
      r.scan.close();
    }
  });
});
