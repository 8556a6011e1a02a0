/**
 * `npm run reduce` on an event file (scripts/reduce.ts `main`, in process): the generator's truth comes back, the
 * calibration's spectrometer values are used over the file's, and the result file (FORMATS §5) read by h5py (Debian's
 * /usr/bin/python3) holds per step exactly the events the result says were kept on the grid.
 */
import { writeFileSync } from 'node:fs';
import path from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import type { LobelineResult } from '@/reduction/formats';
import type { H5Runtime } from '@/reduction/hdf5/runtime';
import { type EventFileTruth, writeSynthEventScan } from '@/reduction/synth/event-file';
import { planScan } from '@/reduction/synth/model';
import { main } from '@/scripts/reduce';
import { generatedDir, python, runtime } from '../scanfile/helpers';

const DIR = generatedDir('events-cli');
let rt: H5Runtime;
let file: string;
let truth: EventFileTruth;

async function run(argv: string[]) {
  let stdout = '';
  let stderr = '';
  const code = await main(argv, { stdout: (t) => (stdout += t), stderr: (t) => (stderr += t) });
  return { code, stdout, stderr };
}

beforeAll(async () => {
  rt = await runtime();
  file = path.join(DIR, 'cli-events.h5');
  const plan = planScan({ kind: 'angular_streaking', steps: 2, size: 96, counts: 5e4, seed: 41, offsetDeg: 6 });
  truth = writeSynthEventScan(rt, file, plan);
});

describe('npm run reduce on an event file', () => {
  it('recovers the true offsets and writes a result file whose counts are the kept events', async () => {
    const settings = path.join(DIR, 'settings.json');
    writeFileSync(
      settings,
      JSON.stringify({ bootstrap: { resamples: 40, seed: 3 }, events: { chunk_events: 20_000 } }),
    );
    const out = path.join(DIR, 'cli-events.result.h5');
    const r = await run([file, '--settings', settings, '--json', '--out', out]);
    expect(r.code, r.stderr).toBe(0);
    const result = JSON.parse(r.stdout) as LobelineResult;
    result.steps.forEach((s, k) => {
      expect(Math.abs(s.offset_deg! - truth.steps[k]!.offset_deg!)).toBeLessThan(3 * s.offset_err_deg!);
    });
    expect(result.events?.spectrometer).toEqual(truth.spectrometer);
    const sums = python<number[]>(
      'import sys, json, h5py, numpy as np\nf = h5py.File(sys.argv[1], "r")\nc = f["entry/result/calibrated/counts"][()]\nprint(json.dumps([float(np.sum(c[k], dtype=np.float64)) for k in range(c.shape[0])]))',
      [out],
    );
    expect(sums).toEqual(result.events!.steps.map((s) => s.kept));
  });

  it('uses the calibration’s spectrometer values over the file’s (a wrong t₀ loses the lobes’ radius)', async () => {
    const cal = path.join(DIR, 'cal.json');
    writeFileSync(cal, JSON.stringify({ center_px: [0, 0], momentum_per_pixel_au: 1, spectrometer: { t0: 12.2 } }));
    const settings = path.join(DIR, 'settings-quick.json');
    writeFileSync(settings, JSON.stringify({ bootstrap: { resamples: 0, seed: 3 } }));
    const good = JSON.parse((await run([file, '--settings', settings, '--json'])).stdout) as LobelineResult;
    const shifted = await run([file, '--settings', settings, '--calibration', cal, '--json']);
    expect(shifted.code, shifted.stderr).toBe(0);
    const bad = JSON.parse(shifted.stdout) as LobelineResult;
    expect(bad.events?.spectrometer.t0_ns).toBe(12.2);
    expect(bad.events?.spectrometer_source.t0).toBe('calibration');
    expect(good.events?.spectrometer_source.t0).toBe('file');
    // 2 ns of t₀ error shifts p_s by ≈ 0.3 a.u. (SCIENCE §7.7 table: 0.5 a.u. per ≈ 2.9 ns near p_s = 0)
    expect(Math.abs(bad.steps[0]!.radius_au! - good.steps[0]!.radius_au!)).toBeGreaterThan(0.02);
  });
});
