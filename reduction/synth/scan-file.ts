/**
 * Writes a synthetic scan file (FORMATS §1) from a plan of model.ts, one frame at a time (memory stays bounded),
 * plus the deliberately broken variants the tests use. The h5wasm runtime is passed in.
 */

import type { Group } from 'h5wasm';
import { SOFTWARE_VERSION } from '../formats';
import {
  createChunkedDataset,
  createNxGroup,
  frameForDtype,
  type NumericDtype,
  writeScalar,
  writeString,
  writeVector,
} from '../hdf5/h5-write';
import type { H5Runtime } from '../hdf5/runtime';
import { createPrng } from '../prng';
import { addHotPixels, renderDetectorBackground, renderSignal, type ScanPlan } from './model';

// VARIABLES //

/** Broken variants, each refused with its own message (or, for the frame kinds, failing on that frame's read). */
export const BROKEN_KINDS = [
  'not_hdf5',
  'truncated',
  'missing_wavelength',
  'missing_entry_class',
  'wrong_counts_rank',
  'absurd_dimensions',
  'nan_counts',
  'negative_counts',
  'bad_helicity',
  'unknown_step_quantity',
  'wrong_step_units',
  'bad_ellipticity',
  'bad_start_time',
  'background_shape_mismatch',
  'lz4_compressed',
] as const;
export type BrokenKind = (typeof BROKEN_KINDS)[number];

// TYPES //

export interface SynthTruth {
  format: 'lobeline.synth-truth';
  version: 1;
  kind: ScanPlan['options']['kind'];
  broken: BrokenKind | null;
  options: ScanPlan['options'];
  calibration: ScanPlan['calibration'];
  step_quantity: ScanPlan['stepQuantity'];
  step_units: string;
  shots: number[];
  background_shots: number[];
  radial_sigma_au: number;
  angular_kappa: number;
  steps: ScanPlan['steps'];
  phase: ScanPlan['phase'];
  /** For the frame-level broken kinds: the step whose read must fail. */
  broken_step: number | null;
}

// FUNCTIONS //

/** Poisson draw of every pixel of an expected-counts frame (in place). */
function poissonFrame(expected: Float64Array, rng: ReturnType<typeof createPrng>): Float64Array {
  for (let i = 0; i < expected.length; i++) expected[i] = rng.poisson(expected[i] as number);
  return expected;
}

/** Optional wording of `/entry/title` and `/entry/notes/comment` (the demo scans use their own). */
export interface SynthText {
  title?: string;
  comment?: string;
}

/**
 * Writes the scan of `plan` to `path` (in the runtime's file system) and returns the truth.
 *
 * @param broken - optional broken variant (file-level kinds not_hdf5/truncated are applied by the caller on bytes)
 * @param text - optional title and note replacing the generator's own
 * @param startTime - optional ISO 8601 `/entry/start_time` (default: the generator's fixed 2026-03-14T09:30:00+01:00)
 */
export function writeSynthScan(
  rt: H5Runtime,
  path: string,
  plan: ScanPlan,
  broken: BrokenKind | null = null,
  text: SynthText = {},
  startTime: string | null = null,
): SynthTruth {
  const o = plan.options;
  const n = o.size;
  const nStep = plan.steps.length;
  const is3d = o.kind !== 'image';
  const frameKinds: BrokenKind[] = ['nan_counts', 'negative_counts'];
  const dtype: NumericDtype = frameKinds.includes(broken as BrokenKind) || o.dtype === 'float32' ? '<f' : '<H';
  const brokenStep =
    broken === 'nan_counts' ? Math.min(1, nStep - 1) : broken === 'negative_counts' ? Math.min(2, nStep - 1) : null;

  const f = new rt.File(path, 'w');
  try {
    const entry = writeEntryMetadata(f, plan, broken, text, startTime);

    const data = createNxGroup(entry, 'data', 'NXdata', { signal: 'counts' });
    data.create_attribute('axes', is3d ? ['step', 'y', 'x'] : ['y', 'x']);
    // LZ4 is HDF5 filter 32004 (registered filter list of The HDF Group); cd_values [0] = default block size
    const compression: 'gzip' | { id: number; opts: number[] } | null =
      broken === 'lz4_compressed' ? { id: 32004, opts: [0] } : o.compression === 'gzip' ? 'gzip' : null;
    if (broken === 'absurd_dimensions') {
      createChunkedDataset(data, 'counts', [nStep, 100_000, 100_000], '<H', { chunks: [1, 64, 64] });
    } else if (broken === 'wrong_counts_rank') {
      createChunkedDataset(data, 'counts', [nStep, 1, n, n], dtype, { chunks: [1, 1, n, n], compression });
    } else {
      const shape = is3d ? [nStep, n, n] : [n, n];
      const counts = createChunkedDataset(data, 'counts', shape, dtype, {
        chunks: is3d ? [1, n, n] : [n, n],
        compression,
      });
      const rng = createPrng(o.seed);
      const frame = new Float64Array(n * n);
      const bg = new Float64Array(n * n);
      for (let k = 0; k < nStep; k++) {
        renderSignal(plan, k, frame);
        if (o.background !== 'none') {
          renderDetectorBackground(plan, plan.shots[k] as number, bg);
          for (let i = 0; i < frame.length; i++) frame[i] = (frame[i] as number) + (bg[i] as number);
        }
        poissonFrame(frame, rng);
        addHotPixels(plan, frame);
        if (k === brokenStep && broken === 'nan_counts') {
          for (let i = 0; i < 5; i++) frame[(n >> 1) * n + 10 + i] = Number.NaN;
        }
        if (k === brokenStep && broken === 'negative_counts') {
          frame[17 * n + 23] = -3;
          frame[18 * n + 23] = -1;
        }
        counts.write_slice(is3d ? [[k, k + 1], [], []] : [[], []], frameForDtype(frame, dtype));
      }
      counts.create_attribute('units', 'counts');
      if (o.background !== 'none') {
        const bgGroup = createNxGroup(entry, 'background', 'NXdata', { signal: 'counts' });
        const single = o.background === 'single';
        const nb = single ? 1 : nStep;
        const bn = broken === 'background_shape_mismatch' ? n - 8 : n;
        bgGroup.create_attribute('axes', single ? ['y', 'x'] : ['step', 'y', 'x']);
        const bds = createChunkedDataset(bgGroup, 'counts', single ? [bn, bn] : [nb, bn, bn], dtype, {
          chunks: single ? [bn, bn] : [1, bn, bn],
          compression,
        });
        const bframe = new Float64Array(bn * bn);
        for (let k = 0; k < nb; k++) {
          renderDetectorBackground(plan, plan.backgroundShots[k] as number, bg);
          if (bn === n) bframe.set(bg);
          else for (let iy = 0; iy < bn; iy++) bframe.set(bg.subarray(iy * n, iy * n + bn), iy * bn);
          poissonFrame(bframe, rng);
          bds.write_slice(single ? [[], []] : [[k, k + 1], [], []], frameForDtype(bframe, dtype));
        }
        if (single) writeScalar(bgGroup, 'shots', plan.backgroundShots[0] as number);
        else writeVector(bgGroup, 'shots', plan.backgroundShots);
      }
    }
    if (is3d) {
      const step = writeVector(data, 'step', plan.stepValues);
      step.create_attribute('quantity', broken === 'unknown_step_quantity' ? 'wavelength' : plan.stepQuantity);
      step.create_attribute('units', broken === 'wrong_step_units' ? 'fs' : plan.stepUnits);
      writeVector(data, 'shots', plan.shots);
    } else {
      writeScalar(data, 'shots', plan.shots[0] as number);
    }
    writeVector(
      data,
      'x',
      Array.from({ length: n }, (_, i) => i),
      'pixel',
    );
    writeVector(
      data,
      'y',
      Array.from({ length: n }, (_, i) => i),
      'pixel',
    );
  } finally {
    f.close();
  }
  return {
    format: 'lobeline.synth-truth',
    version: 1,
    kind: o.kind,
    broken,
    options: o,
    calibration: plan.calibration,
    step_quantity: plan.stepQuantity,
    step_units: plan.stepUnits,
    shots: plan.shots,
    background_shots: plan.backgroundShots,
    radial_sigma_au: plan.radialSigmaAu,
    angular_kappa: plan.kappa,
    steps: plan.steps,
    phase: plan.phase,
    broken_step: brokenStep,
  };
}

/**
 * Writes the file attributes and everything of /entry except the data: experiment kind, start time, title, sample,
 * laser source, detector and notes (FORMATS §1). Shared by image scans (here) and event lists (event-file.ts).
 *
 * @returns the /entry group
 */
export function writeEntryMetadata(
  f: Group,
  plan: ScanPlan,
  broken: BrokenKind | null,
  text: SynthText,
  startTime: string | null,
): Group {
  const o = plan.options;
  f.create_attribute('default', 'entry');
  f.create_attribute('creator', `lobeline ${SOFTWARE_VERSION} synthetic example generator`);
  f.create_attribute('file_time', new Date(Date.UTC(2026, 2, 14, 8, 30, 0)).toISOString());
  const entry = createNxGroup(f, 'entry', broken === 'missing_entry_class' ? null : 'NXentry', { default: 'data' });
  writeString(entry, 'experiment_kind', o.kind);
  writeString(
    entry,
    'start_time',
    broken === 'bad_start_time' ? 'yesterday after lunch' : (startTime ?? '2026-03-14T09:30:00+01:00'),
  );
  writeString(
    entry,
    'title',
    text.title ??
      `Harbor Point Ultrafast Lab synthetic ${o.kind} scan, ${o.target} at ${o.wavelengthNm} nm (seed ${o.seed})`,
  );
  const sample = createNxGroup(entry, 'sample', 'NXsample');
  writeString(sample, 'name', o.target);
  const instrument = createNxGroup(entry, 'instrument', 'NXinstrument');
  const source = createNxGroup(instrument, 'source', 'NXsource');
  if (broken !== 'missing_wavelength') writeScalar(source, 'wavelength', o.wavelengthNm, 'nm');
  if (o.kind === 'angular_streaking') {
    writeScalar(source, 'ellipticity', broken === 'bad_ellipticity' ? 1.3 : o.ellipticity);
  }
  if (o.kind === 'angular_streaking' || o.kind === 'bicircular') {
    writeScalar(source, 'helicity', broken === 'bad_helicity' ? 0 : o.helicity, null, '<i');
  }
  writeScalar(source, 'major_axis_angle', o.majorAxisDeg, 'deg');
  if (o.kind === 'bicircular' || o.kind === 'two_color_phase') writeScalar(source, 'field_ratio', o.fieldRatio);
  if (o.kind === 'bicircular') writeScalar(source, 'relative_phase', o.relativePhaseRad, 'rad');
  writeScalar(source, 'pulse_duration', 6, 'fs');
  writeString(source, 'intensity_convention', 'cycle_averaged_total');
  const detector = createNxGroup(instrument, 'detector', 'NXdetector');
  writeString(detector, 'description', 'Harbor Point VMI-2 (synthetic): MCP, phosphor screen and camera');
  writeScalar(detector, 'momentum_per_pixel', plan.calibration.momentum_per_pixel_au, 'a.u.');
  const notes = createNxGroup(entry, 'notes', 'NXnote');
  writeString(
    notes,
    'comment',
    text.comment ?? 'synthetic data with known truth; see the .truth.json file beside this one',
  );
  return entry;
}

/**
 * Applies the byte-level broken kinds to a written file's bytes.
 *
 * @returns the new bytes (not_hdf5: a text file; truncated: the first 60 %)
 */
export function breakBytes(bytes: Uint8Array, broken: 'not_hdf5' | 'truncated'): Uint8Array {
  if (broken === 'truncated') return bytes.slice(0, Math.floor(bytes.length * 0.6));
  return new TextEncoder().encode(
    'x_px,y_px,counts\n# Harbor Point Ultrafast Lab camera export, saved as CSV by mistake\n12,40,3\n13,40,5\n',
  );
}
