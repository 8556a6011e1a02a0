// Writes a generated scan for the bench-tools browser test with the project's forward model (reduction/synth), in
// the demo lab's scenario: `--ati` adds isotropic ATI rings at E_n = E₀ + nħω with a known κ (the detector's scale
// becomes √(2κ/E_h), SCIENCE.md §7.1). Side files as scripts/make-example.ts writes them (FILE.calibration.json,
// the calibration that undoes the generated detector) plus FILE.plan.json (shots, background shots, ATI truth).
//   npx tsx tests/e2e/helpers/make-bench-scan.ts --out FILE.h5 --kind image [--ati] [--background per_step]
//     [--size 192] [--counts 1e5] [--seed 1] [--image-angle 40] [--distort] [--ellipticity 0.87] [--offset-deg 6]
//     [--steps 1]
import { mkdirSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { parseArgs } from 'node:util';
import type { ExperimentKind } from '@/reduction/formats';
import { loadH5wasmNode } from '@/reduction/hdf5/node';
import { planScan, type SynthOptions } from '@/reduction/synth/model';
import { writeSynthScan } from '@/reduction/synth/scan-file';

/** κ of the generated rings, eV/px² (rings n = 1…5 at ≈ 32 … 64 px). */
export const BENCH_KAPPA = 2e-3;

const { values } = parseArgs({
  options: {
    out: { type: 'string' },
    kind: { type: 'string', default: 'image' },
    ati: { type: 'boolean', default: false },
    background: { type: 'string', default: 'none' },
    size: { type: 'string', default: '192' },
    counts: { type: 'string', default: '1e5' },
    seed: { type: 'string', default: '1' },
    'image-angle': { type: 'string', default: '40' },
    distort: { type: 'boolean', default: false },
    ellipticity: { type: 'string', default: '0.87' },
    'offset-deg': { type: 'string', default: '6' },
    steps: { type: 'string', default: '1' },
  },
});
if (!values.out) throw new Error('--out FILE.h5 is required');
const o: Partial<SynthOptions> = {
  kind: values.kind as ExperimentKind,
  size: Number(values.size),
  counts: Number(values.counts),
  seed: Number(values.seed),
  imageAngleDeg: Number(values['image-angle']),
  background: values.background as SynthOptions['background'],
  distort: values.distort,
  ellipticity: Number(values.ellipticity),
  offsetDeg: Number(values['offset-deg']),
  steps: Number(values.steps),
  ...(values.ati
    ? { atiRings: { e0Ev: 0.45, orders: [1, 2, 3, 4, 5], widthAu: 0.012, amplitude: 2, kappaEvPerPx2: BENCH_KAPPA } }
    : {}),
};
const plan = planScan(o);
const out = path.resolve(values.out);
mkdirSync(path.dirname(out), { recursive: true });
const rt = await loadH5wasmNode();
writeSynthScan(rt, out, plan, null);
const base = out.replace(/\.h5$/, '');
writeFileSync(`${base}.calibration.json`, `${JSON.stringify(plan.calibration, null, 2)}\n`);
writeFileSync(
  `${base}.plan.json`,
  `${JSON.stringify(
    {
      shots: plan.shots,
      backgroundShots: plan.backgroundShots,
      atiRings: plan.atiRings,
      lobeAnglesDeg: plan.steps[0]!.lobes.map((l) => l.angle_deg),
    },
    null,
    2,
  )}\n`,
);
