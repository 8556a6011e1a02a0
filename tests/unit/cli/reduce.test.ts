/**
 * End to end: generate a scan of every kind with detector distortion, background and Poisson noise
 * (scripts/make-example.ts), reduce it through the CLI's code path (scripts/reduce.ts `main`, in process) and
 * check that the known truth comes back: lobe offsets within 3× their stated bootstrap error, radius, in-situ
 * intensity (SCIENCE.md §4.3 / §5.1), and the two-colour phase map φ₀ in high-count cells (SCIENCE.md §6.2:
 * σ(φ₀) ≈ √(2A₀/N)/A₁). Once more as a subprocess (`npx tsx scripts/reduce.ts`) for the exit codes 0/2 and a
 * stderr without stack traces. The truth comes from the forward model (reduction/synth), not from the reducer.
 */
import { spawnSync } from 'node:child_process';
import { readFileSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { wrapDeg, wrapRad } from '@/reduction/angles';
import type { LobelineResult } from '@/reduction/formats';
import { loadH5wasmNode } from '@/reduction/hdf5/node';
import type { H5Runtime } from '@/reduction/hdf5/runtime';
import { type PhaseTruth, truePhaseOfMax } from '@/reduction/synth/model';
import type { SynthTruth } from '@/reduction/synth/scan-file';
import { makeExample } from '@/scripts/make-example';
import { main, sha256File } from '@/scripts/reduce';
import { generatedDir, python, ROOT } from '../scanfile/helpers';

const DIR = generatedDir('cli');

async function run(argv: string[]): Promise<{ code: number; stdout: string; stderr: string }> {
  let stdout = '';
  let stderr = '';
  const code = await main(argv, { stdout: (t) => (stdout += t), stderr: (t) => (stderr += t) });
  return { code, stdout, stderr };
}

async function generate(name: string, args: string[]): Promise<{ file: string; truth: SynthTruth; cal: string }> {
  const file = path.join(DIR, `${name}.h5`);
  const truth = await makeExample(['--out', file, '--distort', '--background', ...args]);
  return { file, truth, cal: path.join(DIR, `${name}.calibration.json`) };
}

let rt: H5Runtime;
beforeAll(async () => {
  rt = await loadH5wasmNode();
});

describe('recovery of the truth through the CLI code path', () => {
  it.each([
    [
      'angular_streaking',
      ['--kind', 'angular_streaking', '--steps', '3', '--size', '256', '--offset-deg', '7', '--seed', '3', '--mirror'],
    ],
    [
      'angular_streaking h = −1',
      [
        '--kind',
        'angular_streaking',
        '--steps',
        '2',
        '--size',
        '256',
        '--helicity=-1',
        '--seed',
        '5',
        '--shrink',
        '0.02',
      ],
    ],
    [
      'bicircular',
      [
        '--kind',
        'bicircular',
        '--steps',
        '3',
        '--size',
        '256',
        '--offset-deg',
        '4',
        '--seed',
        '8',
        '--dtype',
        'uint16',
      ],
    ],
    ['image', ['--kind', 'image', '--size', '256', '--seed', '9', '--compression', 'none']],
  ])('%s', async (name, args) => {
    const { file, truth, cal } = await generate(name.replace(/\W+/g, '_'), args);
    const r = await run([file, '--calibration', cal, '--json']);
    expect(r.stderr).toBe('');
    expect(r.code).toBe(0);
    const res = JSON.parse(r.stdout) as LobelineResult;
    expect(res.input.sha256).toBe(await sha256File(file));
    expect(res.steps.length).toBe(truth.steps.length);
    for (const [k, t] of truth.steps.entries()) {
      const s = res.steps[k]!;
      expect(s.value).toBe(t.value);
      expect(s.lobes.length).toBe(t.lobes.length);
      for (const [j, tl] of t.lobes.entries()) {
        const l = s.lobes[j]!;
        const err = l.angle_err_deg as number;
        expect(err).toBeGreaterThan(0);
        // lobe angle within 3σ of the bootstrap (σ also includes nothing else: the model is exact)
        expect(
          Math.abs(wrapDeg(l.angle_deg - tl.angle_deg)),
          `step ${k} lobe ${j}: ${l.angle_deg} vs ${tl.angle_deg} ± ${err}`,
        ).toBeLessThanOrEqual(3 * err);
        if (tl.expected_deg !== null) {
          expect(Math.abs(wrapDeg((l.expected_deg as number) - tl.expected_deg))).toBeLessThan(1e-6);
          expect(Math.abs((l.offset_deg as number) - (tl.offset_deg as number))).toBeLessThanOrEqual(
            3 * (l.offset_err_deg as number),
          );
        }
      }
      if (t.offset_deg !== null) {
        expect(
          Math.abs((s.offset_deg as number) - t.offset_deg),
          `step ${k} offset ${s.offset_deg} ± ${s.offset_err_deg}`,
        ).toBeLessThanOrEqual(3 * (s.offset_err_deg as number));
      }
      // radius: 3σ of the bootstrap plus a quarter of the 0.01 a.u. grid cell (peak location on a discrete grid)
      const rErr = (s.radius_err_au as number) * 3 + 0.0025;
      expect(
        Math.abs((s.radius_au as number) - (t.radius_au as number)),
        `step ${k} radius ${s.radius_au} vs ${t.radius_au}`,
      ).toBeLessThanOrEqual(rErr);
      if (t.intensity_from_radius_Wcm2 !== null) {
        // I ∝ p² ⇒ relative error 2 Δp/p
        const rel = Math.abs((s.intensity_from_radius_Wcm2 as number) / t.intensity_from_radius_Wcm2 - 1);
        expect(rel).toBeLessThanOrEqual((2 * rErr) / (t.radius_au as number));
      }
    }
  });

  it('two_color_phase: φ₀ map in high-count cells matches the truth within 3σ; result file written', async () => {
    const { file, truth, cal } = await generate('two_color_phase', [
      '--kind',
      'two_color_phase',
      '--steps',
      '12',
      '--periods',
      '2',
      '--size',
      '256',
      '--counts',
      '2e6',
      '--seed',
      '2',
    ]);
    const settings = path.join(DIR, 'pp.settings.json');
    writeFileSync(settings, JSON.stringify({ grid: { p_max_au: 2, n: 201 }, phase: { min_counts: 50, harmonics: 2 } }));
    const out = path.join(DIR, 'pp.result.h5');
    const r = await run([file, '--calibration', cal, '--settings', settings, '--json', '--out', out]);
    expect(r.stderr).toBe('');
    expect(r.code).toBe(0);
    const res = JSON.parse(r.stdout) as LobelineResult;
    expect(res.phase?.method).toBe('fourier');
    expect(res.phase?.n_phases).toBe(12);
    expect(res.phase?.periods).toBe(2);
    // read the maps back from the result file
    const f = new rt.File(out, 'r');
    const get = (p: string) =>
      Array.from((f.get(p) as InstanceType<H5Runtime['Dataset']>).value as Float32Array | Float64Array);
    const mean = get('/entry/result/phase/mean');
    const amp = get('/entry/result/phase/amplitude');
    const phi = get('/entry/result/phase/phase_of_max');
    const px = get('/entry/result/phase/px');
    const py = get('/entry/result/phase/py');
    const summary = JSON.parse((f.get('/entry/result/summary') as InstanceType<H5Runtime['Dataset']>).value as string);
    f.close();
    expect(summary).toEqual(res);
    const t = truth.phase as PhaseTruth;
    const n = px.length;
    let checked = 0;
    let within = 0;
    for (let iy = 0; iy < n; iy++) {
      for (let ix = 0; ix < n; ix++) {
        const i = iy * n + ix;
        const a0 = mean[i]!;
        const a1 = amp[i]!;
        if (!(a0 > 400) || Math.abs(px[ix]!) < 0.03) continue; // high counts; away from the px = 0 phase jump
        const sigma = Math.sqrt((2 * a0) / 12) / a1;
        if (!(sigma < 0.3)) continue;
        checked++;
        if (Math.abs(wrapRad(phi[i]! - truePhaseOfMax(t, px[ix]!, py[iy]!))) <= 3 * sigma) within++;
      }
    }
    expect(checked).toBeGreaterThan(500);
    // Gaussian: 99.7 % inside 3σ; allow for the resampling's correlated cells
    expect(within / checked).toBeGreaterThan(0.98);
  });
});

describe('the recovery checks can fail', () => {
  it('reducing the distorted angular_streaking file without its calibration misses the true offset by > 3σ', async () => {
    const file = path.join(DIR, 'angular_streaking.h5');
    const truth = JSON.parse(readFileSync(path.join(DIR, 'angular_streaking.truth.json'), 'utf8')) as SynthTruth;
    const wrong = path.join(DIR, 'wrong.calibration.json');
    // the right scale and centre but no rotation/ellipticity/mirror correction
    writeFileSync(
      wrong,
      JSON.stringify({
        ...truth.calibration,
        rotation_deg: 0,
        mirror: false,
        detector_ellipticity: { ratio: 1, axis_deg: 0 },
      }),
    );
    const r = await run([file, '--calibration', wrong, '--json']);
    expect(r.code).toBe(0);
    const s = (JSON.parse(r.stdout) as LobelineResult).steps[0]!;
    expect(Math.abs((s.offset_deg as number) - 7)).toBeGreaterThan(3 * (s.offset_err_deg as number));
  });
});

describe("a file from another group's software (tests/fixtures/h5py/make_fixtures.py, written by h5py)", () => {
  const H5PY = path.join(ROOT, 'tests/fixtures/h5py');
  it('unusable optional fields: exit 0, the scan reduces, each field named in a warning (FORMATS §1)', async () => {
    const r = await run([path.join(H5PY, 'opt_other_group_software.h5'), '--json']);
    expect(r.code, r.stderr).toBe(0);
    const result = JSON.parse(r.stdout) as LobelineResult;
    expect(result.steps).toHaveLength(3);
    for (const p of [
      '/entry/instrument/source/pulse_duration@units',
      '/entry/instrument/source/major_axis_angle',
      '/entry/instrument/detector/description',
      '/entry/data/x@units',
    ]) {
      expect(
        result.warnings.some((w) => w.startsWith(`${p}: `) && w.includes('ignored')),
        p,
      ).toBe(true);
    }
    // the ignored major axis falls back to the default 0° of FORMATS §1
    expect(result.input.major_axis_angle_deg).toBe(0);
  });

  it('the same defect on a required field (wavelength without @units): exit 2 naming path and rule', async () => {
    const r = await run([path.join(H5PY, 'bad_wavelength_no_units.h5'), '--json']);
    expect(r.code).toBe(2);
    expect(r.stdout).toBe('');
    expect(r.stderr).toContain('/entry/instrument/source/wavelength@units: required: must be "nm" but missing');
  });
});

describe('refusals and exit codes', () => {
  it('a broken file: exit 2, every problem on stderr, one per line, nothing on stdout', async () => {
    const file = path.join(DIR, 'many.h5');
    await makeExample([
      '--kind',
      'angular_streaking',
      '--out',
      file,
      '--size',
      '64',
      '--steps',
      '2',
      '--broken',
      'missing_wavelength',
    ]);
    const r = await run([file, '--json']);
    expect(r.code).toBe(2);
    expect(r.stdout).toBe('');
    expect(r.stderr).toBe(
      '/entry/instrument/source/wavelength: required for every scan (fundamental wavelength in nm) but missing\n',
    );
  });

  it('a NaN frame: exit 2 naming the step', async () => {
    const file = path.join(DIR, 'nan.h5');
    await makeExample([
      '--kind',
      'bicircular',
      '--out',
      file,
      '--size',
      '64',
      '--steps',
      '3',
      '--broken',
      'nan_counts',
    ]);
    const r = await run([file]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/^\/entry\/data\/counts: step 1: pixel \(x \d+, y \d+\) is NaN; counts must be finite\n$/);
  });

  it('bad JSON and bad values in --calibration / --settings: exit 2 with the zod problems', async () => {
    const file = path.join(DIR, 'ok.h5');
    await makeExample(['--kind', 'image', '--out', file, '--size', '64']);
    const badJson = path.join(DIR, 'bad.json');
    writeFileSync(badJson, '{ "center_px": [1, 2], ');
    let r = await run([file, '--calibration', badJson]);
    expect(r.code).toBe(2);
    expect(r.stderr).toMatch(/^--calibration .*bad\.json: not valid JSON \(/);
    const badCal = path.join(DIR, 'badcal.json');
    writeFileSync(badCal, JSON.stringify({ center_px: [1], momentum_per_pixel_au: -2, colour: 'teal' }));
    r = await run([file, '--calibration', badCal]);
    expect(r.code).toBe(2);
    const lines = r.stderr.trimEnd().split('\n');
    expect(lines.length).toBeGreaterThanOrEqual(3);
    expect(lines.some((l) => l.includes('calibration.center_px'))).toBe(true);
    expect(lines.some((l) => l.includes('calibration.momentum_per_pixel_au') && l.includes('must be positive'))).toBe(
      true,
    );
    expect(lines.some((l) => l.includes('colour'))).toBe(true);
    const badSet = path.join(DIR, 'badset.json');
    writeFileSync(badSet, JSON.stringify({ grid: { n: 3 } }));
    r = await run([file, '--settings', badSet]);
    expect(r.code).toBe(2);
    expect(r.stderr).toContain('settings.grid.n');
    r = await run([path.join(DIR, 'nope.h5')]);
    expect(r).toMatchObject({ code: 2, stderr: expect.stringContaining('nope.h5: no such file') });
  });

  it('without --json prints a table; without --calibration uses the file’s nominal scale', async () => {
    const file = path.join(DIR, 'ok.h5');
    const r = await run([file]);
    expect(r.code).toBe(0);
    expect(r.stdout).toContain('Lobeline 0.1.0 — ok.h5');
    expect(r.stdout).toMatch(/step\s+index \(1\)\s+counts\s+offset \(deg\)\s+radius \(a\.u\.\)/);
    expect(r.stdout).toContain('warnings:');
  });

  it('as a subprocess (npx tsx scripts/reduce.ts): exit 0 with JSON only on stdout, exit 2 with no stack trace', () => {
    const file = path.join(DIR, 'ok.h5');
    const cal = path.join(DIR, 'ok.calibration.json');
    const ok = spawnSync('npx', ['tsx', 'scripts/reduce.ts', file, '--calibration', cal, '--json'], {
      cwd: ROOT,
      encoding: 'utf8',
    });
    expect(ok.status).toBe(0);
    expect(JSON.parse(ok.stdout).format).toBe('lobeline.result');
    const bad = path.join(DIR, 'many.h5');
    const no = spawnSync('npx', ['tsx', 'scripts/reduce.ts', bad, '--json'], { cwd: ROOT, encoding: 'utf8' });
    expect(no.status).toBe(2);
    expect(no.stdout).toBe('');
    expect(no.stderr).toContain('/entry/instrument/source/wavelength: required for every scan');
    expect(no.stderr).not.toMatch(/\n\s+at |Error:|HDF5-DIAG/);
    const notH5 = path.join(DIR, 'notes.h5');
    writeFileSync(notH5, 'shift notes, not a scan\n');
    const n2 = spawnSync('npx', ['tsx', 'scripts/reduce.ts', notH5], { cwd: ROOT, encoding: 'utf8' });
    expect(n2.status).toBe(2);
    expect(n2.stderr).toBe(
      '(file): not an HDF5 file: the 8-byte HDF5 signature was not found at byte 0, 512, 1024, … (the file looks like a text file)\n',
    );
  }, 120_000);

  it('result file from --out is read by h5py (NeXus default chain) and the partial file is gone', () => {
    const out = path.join(DIR, 'pp.result.h5');
    const d = python<{ d0: string; d1: string; d2: string; shape: number[] }>(
      `import h5py, json, sys
f = h5py.File(sys.argv[1], 'r')
print(json.dumps({'d0': f.attrs['default'], 'd1': f['entry'].attrs['default'], 'd2': f['entry/result'].attrs['default'],
  'shape': list(f['entry/result/calibrated/counts'].shape)}))`,
      [out],
    );
    expect(d).toEqual({ d0: 'entry', d1: 'result', d2: 'calibrated', shape: [12, 201, 201] });
    expect(readFileSync(out).length).toBeGreaterThan(0);
  });
});
