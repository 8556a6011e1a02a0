/**
 * Helpers of the calibration-bench tool tests: frames from the example generator's forward model
 * (reduction/synth, the Harbor Point scenario) in memory, Poisson realisations, a generated HDF5 file read back
 * through the scan reader, and scatter statistics.
 */
import path from 'node:path';
import type { BenchFrame } from '@/reduction/bench/types';
import { openScanFile } from '@/reduction/hdf5/reader';
import { createPrng, type Prng } from '@/reduction/prng';
import { planScan, renderSignal, type ScanPlan, type SynthOptions } from '@/reduction/synth/model';
import { writeSynthScan } from '@/reduction/synth/scan-file';
import { generatedDir, runtime } from '../../scanfile/helpers';

export function plan(o: Partial<SynthOptions>): ScanPlan {
  return planScan(o);
}

/** Expected counts of step k (no noise). */
export function expected(p: ScanPlan, k = 0): Float64Array {
  const n = p.options.size;
  return renderSignal(p, k, new Float64Array(n * n));
}

/** One Poisson realisation of an expected frame. */
export function realise(mean: Float64Array, rng: Prng): Float64Array {
  const out = new Float64Array(mean.length);
  for (let i = 0; i < mean.length; i++) out[i] = rng.poisson(mean[i]!);
  return out;
}

export function frameOf(p: ScanPlan, counts: Float64Array): BenchFrame {
  return { nX: p.options.size, nY: p.options.size, counts };
}

export const rngOf = (seed: number) => createPrng(seed);

/** Writes the plan as a scan file with the generator and reads step k (and its background) back. */
export async function generatedFile(
  p: ScanPlan,
  name: string,
  k = 0,
): Promise<{ counts: Float64Array; background: Float64Array | null }> {
  const rt = await runtime();
  const file = path.join(generatedDir('bench'), `${name}.h5`);
  writeSynthScan(rt, file, p, null);
  const r = openScanFile(rt, file);
  if (!r.ok) throw new Error(`generated file refused: ${r.problems.map((q) => q.message).join('; ')}`);
  try {
    return { counts: r.scan.readFrame(k), background: r.scan.readBackground(k) };
  } finally {
    r.scan.close();
  }
}

export function meanSd(a: number[]): { mean: number; sd: number } {
  const mean = a.reduce((s, v) => s + v, 0) / a.length;
  const sd = Math.sqrt(a.reduce((s, v) => s + (v - mean) ** 2, 0) / (a.length - 1));
  return { mean, sd };
}
