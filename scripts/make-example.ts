/**
 * `npm run make-example -- --kind angular_streaking|bicircular|two_color_phase|image --out FILE.h5 [options]`
 *
 * Writes a valid scan file (FORMATS §1) from the forward model of reduction/synth with known truth, plus
 * `FILE.truth.json` (true lobe angles, offsets, radii, intensities, phase-map parameters) and
 * `FILE.calibration.json` (the detector calibration that undoes the generated distortion). `--broken KIND` writes
 * one of the broken variants used by the tests instead.
 */
import { mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { parseArgs } from 'node:util';
import { EXPERIMENT_KINDS, type ExperimentKind } from '@/reduction/formats';
import { loadH5wasmNode } from '@/reduction/hdf5/node';
import { type BackgroundLayout, planScan, type SynthOptions } from '@/reduction/synth/model';
import {
  BROKEN_KINDS,
  type BrokenKind,
  breakBytes,
  type SynthTruth,
  writeSynthScan,
} from '@/reduction/synth/scan-file';

const USAGE = `usage: npm run make-example -- --kind ${EXPERIMENT_KINDS.join('|')} --out FILE.h5
  [--target He] [--wavelength 800] [--ellipticity 0.87] [--helicity=1|--helicity=-1] [--steps 5] [--size 512]
  [--counts 2e5] [--offset-deg 6] [--seed 1] [--background [single|per_step]] [--distort] [--mirror]
  [--compression gzip|none] [--dtype uint16|float32] [--field-ratio 1] [--relative-phase 0] [--periods 2]
  [--shrink 0] [--major-axis 0] [--intensity-min 2e14] [--intensity-max 5e14]
  [--broken ${BROKEN_KINDS.join('|')}]`;

/** Thrown for a bad command line; printed without a stack trace. */
class UsageError extends Error {}

function num(name: string, v: string | undefined, fallback: number): number {
  if (v === undefined) return fallback;
  const x = Number(v);
  if (!Number.isFinite(x)) throw new UsageError(`--${name} must be a number, got "${v}"`);
  return x;
}

/** Paths of the side files: FILE.h5 → FILE.truth.json, FILE.calibration.json. */
export function sidePaths(out: string): { truth: string; calibration: string } {
  const base = out.replace(/\.(h5|hdf5|nxs)$/i, '');
  return { truth: `${base}.truth.json`, calibration: `${base}.calibration.json` };
}

/**
 * Runs the generator.
 *
 * @param argv - arguments after the script name
 * @returns the truth written
 */
export async function makeExample(argv: string[]): Promise<SynthTruth> {
  // `--background` may be given bare (per_step) or with a layout
  const args = [...argv];
  const bi = args.indexOf('--background');
  if (bi >= 0 && (args[bi + 1] === undefined || args[bi + 1]?.startsWith('--'))) args.splice(bi + 1, 0, 'per_step');
  const { values } = parseArgs({
    args,
    options: {
      kind: { type: 'string' },
      out: { type: 'string' },
      target: { type: 'string' },
      wavelength: { type: 'string' },
      ellipticity: { type: 'string' },
      helicity: { type: 'string' },
      steps: { type: 'string' },
      size: { type: 'string' },
      counts: { type: 'string' },
      'offset-deg': { type: 'string' },
      seed: { type: 'string' },
      background: { type: 'string' },
      distort: { type: 'boolean' },
      mirror: { type: 'boolean' },
      compression: { type: 'string' },
      dtype: { type: 'string' },
      'field-ratio': { type: 'string' },
      'relative-phase': { type: 'string' },
      periods: { type: 'string' },
      shrink: { type: 'string' },
      'major-axis': { type: 'string' },
      'intensity-min': { type: 'string' },
      'intensity-max': { type: 'string' },
      broken: { type: 'string' },
      help: { type: 'boolean' },
    },
    strict: true,
    allowPositionals: false,
  });
  if (values.help) throw new UsageError(USAGE);
  const kind = values.kind as ExperimentKind | undefined;
  if (kind === undefined || !(EXPERIMENT_KINDS as readonly string[]).includes(kind)) {
    throw new UsageError(`--kind must be one of ${EXPERIMENT_KINDS.join(', ')}\n${USAGE}`);
  }
  if (values.out === undefined) throw new UsageError(`--out FILE.h5 is required\n${USAGE}`);
  const broken = (values.broken ?? null) as BrokenKind | null;
  if (broken !== null && !(BROKEN_KINDS as readonly string[]).includes(broken)) {
    throw new UsageError(`--broken must be one of ${BROKEN_KINDS.join(', ')}`);
  }
  const background = (values.background ?? 'none') as BackgroundLayout;
  if (!['none', 'single', 'per_step'].includes(background)) {
    throw new UsageError('--background must be single or per_step');
  }
  const compression = values.compression ?? 'gzip';
  if (compression !== 'gzip' && compression !== 'none') throw new UsageError('--compression must be gzip or none');
  const dtype = values.dtype ?? 'float32';
  if (dtype !== 'uint16' && dtype !== 'float32') throw new UsageError('--dtype must be uint16 or float32');
  const helicity = num('helicity', values.helicity, 1);
  if (helicity !== 1 && helicity !== -1) throw new UsageError('--helicity must be 1 or -1');
  const defaults = kind === 'two_color_phase' ? { steps: 32 } : kind === 'image' ? { steps: 1 } : { steps: 5 };
  const opts: Partial<SynthOptions> = {
    kind,
    target: values.target ?? 'He',
    wavelengthNm: num('wavelength', values.wavelength, 800),
    ellipticity: num('ellipticity', values.ellipticity, 0.87),
    helicity,
    steps: num('steps', values.steps, defaults.steps),
    size: num('size', values.size, 512),
    counts: num('counts', values.counts, 2e5),
    offsetDeg: num('offset-deg', values['offset-deg'], 6),
    seed: num('seed', values.seed, 1),
    background: broken === 'background_shape_mismatch' && background === 'none' ? 'per_step' : background,
    distort: values.distort ?? false,
    mirror: values.mirror ?? false,
    compression,
    dtype,
    fieldRatio: num('field-ratio', values['field-ratio'], kind === 'two_color_phase' ? 0.1 : 1),
    relativePhaseRad: num('relative-phase', values['relative-phase'], 0),
    periods: num('periods', values.periods, 2),
    shrink: num('shrink', values.shrink, 0),
    majorAxisDeg: num('major-axis', values['major-axis'], 0),
    intensityMinWcm2: num('intensity-min', values['intensity-min'], 2e14),
    intensityMaxWcm2: num('intensity-max', values['intensity-max'], 5e14),
  };
  if (kind === 'bicircular' && values['intensity-min'] === undefined) opts.intensityMinWcm2 = 2e14;
  let plan: ReturnType<typeof planScan>;
  try {
    plan = planScan(opts);
  } catch (err) {
    throw new UsageError((err as Error).message);
  }
  const out = path.resolve(values.out);
  mkdirSync(path.dirname(out), { recursive: true });
  const rt = await loadH5wasmNode();
  const h5Broken = broken === 'not_hdf5' || broken === 'truncated' ? null : broken;
  const truth = writeSynthScan(rt, out, plan, h5Broken);
  if (broken === 'not_hdf5' || broken === 'truncated') {
    writeFileSync(out, breakBytes(new Uint8Array(readFileSync(out)), broken));
    truth.broken = broken;
  }
  const side = sidePaths(out);
  writeFileSync(side.truth, `${JSON.stringify(truth, null, 2)}\n`);
  writeFileSync(side.calibration, `${JSON.stringify(plan.calibration, null, 2)}\n`);
  return truth;
}

async function cli(): Promise<void> {
  try {
    const truth = await makeExample(process.argv.slice(2));
    const o = truth.options;
    process.stdout.write(
      `wrote ${o.kind} scan: ${truth.steps.length} step(s), ${o.size}×${o.size} ${o.dtype}, ${o.compression}` +
        `${truth.broken ? `, broken: ${truth.broken}` : ''}\n`,
    );
  } catch (err) {
    if (err instanceof UsageError || (err as { code?: string }).code?.startsWith('ERR_PARSE_ARGS')) {
      process.stderr.write(`${(err as Error).message}\n`);
      process.exit(2);
    }
    process.stderr.write(`make-example failed: ${(err as Error).message}\n`);
    process.exit(1);
  }
}

if (process.argv[1] && path.resolve(process.argv[1]) === path.resolve(import.meta.filename)) {
  await cli();
}
