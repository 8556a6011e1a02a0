/**
 * Result-file writer (FORMATS §5), NeXus layout:
 *
 * ```
 * / @default="entry"
 * /entry (NXentry) @default="result"
 *   /result (NXprocess) @default="calibrated"   program, version
 *     /calibrated (NXdata) @signal="counts" @axes=["step","py","px"]   counts[step, py, px], step, py, px (a.u.)
 *     /angular    (NXdata) @signal="yield"  @axes=["step","theta"]     yield[step, theta], theta (deg)
 *     /radial     (NXdata) @signal="yield"  @axes=["step","p"]         yield[step, p], p (a.u.)
 *     /phase      (NXdata) @signal="phase_of_max" @axes=["py","px"]    mean, amplitude, phase_of_max (rad),
 *                                                                     contrast [, harmonic_2_amplitude, harmonic_2_phase]
 *     summary     the result JSON of FORMATS §4 (string)
 * ```
 *
 * NeXus attributes per the NXdata base class (NIAC): `NX_class`, `signal`, `axes` (string array, one per
 * dimension), `AXISNAME_indices`, `units` on every field. The per-step datasets are created at their full shape up
 * front (chunked, one chunk per step) and each step's slice is written as it comes, so memory stays bounded.
 */
import type { Dataset, Group } from 'h5wasm';
import { AU_MOMENTUM_SI } from '../constants';
import { type LobelineResult, SOFTWARE_VERSION } from '../formats';
import { createChunkedDataset, createNxGroup, writeString, writeVector } from './h5-write';
import type { H5Runtime } from './runtime';

// TYPES //

export interface ResultFileLayout {
  nStep: number;
  /** Step values with their quantity and units (FORMATS §1). */
  step: { quantity: string; units: string; values: ArrayLike<number> };
  /** Momentum grid cell centres, a.u. (calibrated counts are [step, py.length, px.length]). */
  pxAu: ArrayLike<number>;
  pyAu: ArrayLike<number>;
  /** Angular bin centres, deg. */
  thetaDeg: ArrayLike<number>;
  /** Radial bin centres, a.u. */
  pAu: ArrayLike<number>;
  /** gzip (default) or none. */
  compression?: 'gzip' | 'none';
}

export interface StepArrays {
  /** Calibrated counts on the momentum grid, row-major [py][px]. */
  calibrated: ArrayLike<number>;
  /** Angular distribution, one value per theta bin. */
  angular: ArrayLike<number>;
  /** Radial distribution, one value per p bin. */
  radial: ArrayLike<number>;
}

export interface PhaseMapArrays {
  mean: ArrayLike<number>;
  amplitude: ArrayLike<number>;
  phase_of_max: ArrayLike<number>;
  contrast: ArrayLike<number>;
  harmonic_2_amplitude?: ArrayLike<number>;
  harmonic_2_phase?: ArrayLike<number>;
}

// FUNCTIONS //

function axisAttrs(d: Dataset, units: string, longName: string): void {
  d.create_attribute('units', units);
  d.create_attribute('long_name', longName);
}

function momentumAxis(g: Group, name: string, values: ArrayLike<number>, longName: string): void {
  const d = writeVector(g, name, values, 'a.u.');
  d.create_attribute('long_name', longName);
  // SCIENCE.md §11.1: atomic units have no universal unit string; store the SI factor beside it
  d.create_attribute('si_factor_kg_m_per_s', Float64Array.of(AU_MOMENTUM_SI), [], '<d');
}

function stepAxis(g: Group, layout: ResultFileLayout): void {
  const d = writeVector(g, 'step', layout.step.values, layout.step.units);
  d.create_attribute('quantity', layout.step.quantity);
}

/** Writes a result file step by step. */
export class ResultFileWriter {
  private readonly file: InstanceType<H5Runtime['File']>;
  private readonly calibrated: Dataset;
  private readonly angular: Dataset;
  private readonly radial: Dataset;
  private readonly result: Group;
  private readonly layout: ResultFileLayout;
  private readonly written: boolean[];
  private closed = false;

  private constructor(rt: H5Runtime, path: string, layout: ResultFileLayout) {
    this.layout = layout;
    const nx = layout.pxAu.length;
    const ny = layout.pyAu.length;
    const nt = layout.thetaDeg.length;
    const np = layout.pAu.length;
    const n = layout.nStep;
    if (!(Number.isInteger(n) && n >= 1)) throw new RangeError(`nStep must be a positive integer, got ${n}`);
    if (layout.step.values.length !== n) {
      throw new RangeError(`step values have length ${layout.step.values.length}, expected ${n}`);
    }
    const compression = layout.compression === 'none' ? null : ('gzip' as const);
    this.written = new Array<boolean>(n).fill(false);
    const f = new rt.File(path, 'w');
    this.file = f;
    f.create_attribute('default', 'entry');
    f.create_attribute('creator', `lobeline ${SOFTWARE_VERSION}`);
    f.create_attribute('file_time', new Date().toISOString());
    const entry = createNxGroup(f, 'entry', 'NXentry', { default: 'result' });
    const result = createNxGroup(entry, 'result', 'NXprocess', { default: 'calibrated' });
    this.result = result;
    writeString(result, 'program', 'lobeline');
    writeString(result, 'version', SOFTWARE_VERSION);

    const cal = createNxGroup(result, 'calibrated', 'NXdata', { signal: 'counts' });
    cal.create_attribute('axes', ['step', 'py', 'px']);
    cal.create_attribute('step_indices', Int32Array.of(0), [], '<i');
    cal.create_attribute('py_indices', Int32Array.of(1), [], '<i');
    cal.create_attribute('px_indices', Int32Array.of(2), [], '<i');
    this.calibrated = createChunkedDataset(cal, 'counts', [n, ny, nx], '<f', { chunks: [1, ny, nx], compression });
    axisAttrs(this.calibrated, 'counts', 'calibrated counts per momentum cell');
    stepAxis(cal, layout);
    momentumAxis(cal, 'px', layout.pxAu, 'p_x (lab frame)');
    momentumAxis(cal, 'py', layout.pyAu, 'p_y (lab frame)');

    const ang = createNxGroup(result, 'angular', 'NXdata', { signal: 'yield' });
    ang.create_attribute('axes', ['step', 'theta']);
    ang.create_attribute('step_indices', Int32Array.of(0), [], '<i');
    ang.create_attribute('theta_indices', Int32Array.of(1), [], '<i');
    this.angular = createChunkedDataset(ang, 'yield', [n, nt], '<d', { chunks: [1, nt], compression });
    axisAttrs(this.angular, 'counts', 'counts per angular bin in the radial window');
    stepAxis(ang, layout);
    const theta = writeVector(ang, 'theta', layout.thetaDeg, 'deg');
    theta.create_attribute('long_name', 'lab azimuth θ = atan2(p_y, p_x)');

    const rad = createNxGroup(result, 'radial', 'NXdata', { signal: 'yield' });
    rad.create_attribute('axes', ['step', 'p']);
    rad.create_attribute('step_indices', Int32Array.of(0), [], '<i');
    rad.create_attribute('p_indices', Int32Array.of(1), [], '<i');
    this.radial = createChunkedDataset(rad, 'yield', [n, np], '<d', { chunks: [1, np], compression });
    axisAttrs(this.radial, 'counts/a.u.', 'dN/dp over all angles, counts per a.u.');
    stepAxis(rad, layout);
    momentumAxis(rad, 'p', layout.pAu, '|p| in the polarization plane');
  }

  /**
   * Creates the file with every dataset at its full shape.
   *
   * @param rt - h5wasm runtime
   * @param path - output path in the runtime's file system
   */
  static create(rt: H5Runtime, path: string, layout: ResultFileLayout): ResultFileWriter {
    return new ResultFileWriter(rt, path, layout);
  }

  /** Writes step k's slices. */
  writeStep(k: number, arrays: StepArrays): void {
    this.assertOpen();
    const { nStep } = this.layout;
    if (!Number.isInteger(k) || k < 0 || k >= nStep) throw new RangeError(`step ${k} is outside 0…${nStep - 1}`);
    const nCal = this.layout.pxAu.length * this.layout.pyAu.length;
    check('calibrated', arrays.calibrated, nCal);
    check('angular', arrays.angular, this.layout.thetaDeg.length);
    check('radial', arrays.radial, this.layout.pAu.length);
    this.calibrated.write_slice([[k, k + 1], [], []], Float32Array.from(arrays.calibrated));
    this.angular.write_slice([[k, k + 1], []], Float64Array.from(arrays.angular));
    this.radial.write_slice([[k, k + 1], []], Float64Array.from(arrays.radial));
    this.written[k] = true;
  }

  /** Writes the phase maps ([py, px] each). */
  writePhase(maps: PhaseMapArrays): void {
    this.assertOpen();
    const nx = this.layout.pxAu.length;
    const ny = this.layout.pyAu.length;
    const g = createNxGroup(this.result, 'phase', 'NXdata', { signal: 'phase_of_max' });
    g.create_attribute('axes', ['py', 'px']);
    g.create_attribute('py_indices', Int32Array.of(0), [], '<i');
    g.create_attribute('px_indices', Int32Array.of(1), [], '<i');
    g.create_attribute(
      'model',
      'Y(p, phi) = mean + amplitude cos(phi - phase_of_max) [+ harmonic_2_amplitude cos(2 phi - harmonic_2_phase)]',
    );
    const fields: [keyof PhaseMapArrays, string, string][] = [
      ['mean', 'counts', 'A0: mean yield over the relative phase'],
      ['amplitude', 'counts', 'A1: first-harmonic modulation amplitude'],
      ['phase_of_max', 'rad', 'phi0: relative phase of maximum yield'],
      ['contrast', '1', 'A1/A0: relative phase contrast'],
      ['harmonic_2_amplitude', 'counts', 'A2: second-harmonic amplitude'],
      ['harmonic_2_phase', 'rad', 'psi2: second-harmonic phase'],
    ];
    for (const [name, units, longName] of fields) {
      const v = maps[name];
      if (v === undefined) continue;
      check(name, v, nx * ny);
      const d = g.create_dataset({ name, data: Float32Array.from(v), shape: [ny, nx], dtype: '<f' });
      axisAttrs(d, units, longName);
    }
    momentumAxis(g, 'px', this.layout.pxAu, 'p_x (lab frame)');
    momentumAxis(g, 'py', this.layout.pyAu, 'p_y (lab frame)');
  }

  /** Writes `/entry/result/summary`, the result JSON of FORMATS §4. */
  writeSummary(result: LobelineResult): void {
    this.assertOpen();
    const d = writeString(this.result, 'summary', JSON.stringify(result));
    d.create_attribute('format', 'lobeline.result');
    d.create_attribute('media_type', 'application/json');
  }

  /** Steps not yet written (their slices read back as zeros). */
  missingSteps(): number[] {
    return this.written.flatMap((w, k) => (w ? [] : [k]));
  }

  /** Flushes and closes the file. */
  close(): void {
    if (this.closed) return;
    this.closed = true;
    this.file.close();
  }

  private assertOpen(): void {
    if (this.closed) throw new Error('the result file is already closed');
  }
}

function check(name: string, v: ArrayLike<number>, n: number): void {
  if (v.length !== n) throw new RangeError(`${name} has ${v.length} values, expected ${n}`);
}
