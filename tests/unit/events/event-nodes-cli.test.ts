/**
 * scripts/event-nodes.ts on a generated event file (reduction/synth/event-file.ts) of a weak-field spectrometer
 * (0.3 m, 200 V/m) with B = 1.0×10⁻³ T: the period must be SCIENCE §7.7's 35.723 868 ns for that field, within 3
 * of the stated errors, and t₀ the generator's 14.2 ns; a file without a magnetic field gets exit 2 and the reason.
 */
import path from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import type { H5Runtime } from '@/reduction/hdf5/runtime';
import { DEFAULT_EVENT_FILE_OPTIONS, writeSynthEventScan } from '@/reduction/synth/event-file';
import { planScan } from '@/reduction/synth/model';
import { main } from '@/scripts/event-nodes';
import { generatedDir, runtime } from '../scanfile/helpers';

const DIR = generatedDir('event-nodes');
let rt: H5Runtime;

async function run(argv: string[]) {
  let stdout = '';
  let stderr = '';
  const code = await main(argv, { stdout: (t) => (stdout += t), stderr: (t) => (stderr += t) });
  return { code, stdout, stderr };
}

function write(name: string, bT: number): string {
  const file = path.join(DIR, name);
  // an isotropic part fills the flight times between the two lobes, so the nodes between them have events
  const plan = planScan({
    kind: 'angular_streaking',
    steps: 1,
    size: 96,
    counts: 1e5,
    seed: 12,
    isotropicFraction: 2,
  });
  // laser along +x: the lobes lie along p_s (image axes (p_y, p_s)), so the flight times spread over several nodes
  writeSynthEventScan(rt, file, plan, {
    laserAxis: '+x',
    spectrometer: {
      ...DEFAULT_EVENT_FILE_OPTIONS.spectrometer,
      acceleration_length_m: 0.3,
      electric_field_v_per_m: 200,
      magnetic_field_t: bT,
    },
  });
  return file;
}

beforeAll(async () => {
  rt = await runtime();
});

describe('scripts/event-nodes.ts', () => {
  it('finds the period of 1.0e-3 T and the true t₀ in a generated file', async () => {
    const file = write('nodes-10G.h5', 1.0e-3);
    const r = await run([file, '--t0-guess', '5', '--json']);
    expect(r.code, r.stderr).toBe(0);
    const fit = JSON.parse(r.stdout);
    expect(fit.nodesNs.length).toBeGreaterThanOrEqual(3);
    expect(Math.abs(fit.periodNs - 35.723868)).toBeLessThan(3 * fit.periodErrNs);
    expect(Math.abs(fit.t0Ns - DEFAULT_EVENT_FILE_OPTIONS.spectrometer.t0_ns)).toBeLessThan(3 * fit.t0ErrNs);
    const table = await run([file, '--t0-guess', '5']);
    expect(table.stdout).toContain('cyclotron period: 35.7');
  });

  it('exit 2 with the reason for a file without a magnetic field', async () => {
    const r = await run([write('nodes-0G.h5', 0)]);
    expect(r.code).toBe(2);
    expect(r.stderr).toContain('no node-spacing fit');
  });
});
