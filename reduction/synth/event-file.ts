/**
 * Writes a synthetic event-list scan file (FORMATS §1.1) with known truth: the same plan as an image scan
 * (model.ts), but each detected electron is written as an event (x, y, tof) instead of a count in a pixel.
 *
 * Per step, every camera pixel of the plan gets a Poisson number of electrons with the mean the image generator
 * would give it (renderSignal, background excluded); each electron's momentum in the image plane is the pixel's
 * lab momentum at a uniformly drawn point inside the pixel, its momentum along the laser is normal with the width
 * `alongLaserSigmaAu` (a synthetic choice, not a physics result), and it is sent forward through the spectrometer
 * (reduction/events/kinematics.ts) to an impact point and a flight time, t₀ and the detector centre added as a
 * delay-line detector reports them. Events are written step after step, so the file's memory stays one step.
 */
import type { Group } from 'h5wasm';
import {
  auToNs,
  bohrToMm,
  flightTimeAu,
  fromImageAxes,
  impactPoint,
  type LaserAxis,
  type SpectrometerSi,
  spectrometerAu,
} from '../events/kinematics';
import { createNxGroup, writeScalar, writeVector } from '../hdf5/h5-write';
import type { H5Runtime } from '../hdf5/runtime';
import { createPrng } from '../prng';
import { pixelToMomentum, renderSignal, type ScanPlan } from './model';
import { type SynthText, writeEntryMetadata } from './scan-file';

// TYPES //

export interface EventFileOptions {
  spectrometer: SpectrometerSi;
  /** Direction of the laser in the detector frame (FORMATS §1.1 `events.laser_axis`). */
  laserAxis: LaserAxis;
  /** Width of the momentum along the laser, a.u. */
  alongLaserSigmaAu: number;
  /** Stored precision of x, y and tof. */
  dtype: 'float32' | 'float64';
}

export interface EventFileTruth {
  format: 'lobeline.synth-event-truth';
  version: 1;
  events_per_step: number[];
  spectrometer: SpectrometerSi;
  laser_axis: LaserAxis;
  along_laser_sigma_au: number;
  steps: ScanPlan['steps'];
}

export const DEFAULT_EVENT_FILE_OPTIONS: EventFileOptions = {
  spectrometer: {
    acceleration_length_m: 0.1,
    drift_length_m: 0,
    electric_field_v_per_m: 2000,
    magnetic_field_t: 1.0e-3,
    t0_ns: 14.2,
    detector_center_mm: [0.35, -0.2],
  },
  laserAxis: '+y',
  alongLaserSigmaAu: 0.1,
  dtype: 'float64',
};

// FUNCTIONS //

/**
 * Writes the event file and returns its truth (the plan's steps, the number of events of each step).
 *
 * @param rt - h5wasm runtime
 * @param path - file to write
 * @param plan - the scan plan (planScan); its background and broken kinds do not apply to event files
 */
export function writeSynthEventScan(
  rt: H5Runtime,
  path: string,
  plan: ScanPlan,
  options: Partial<EventFileOptions> = {},
  text: SynthText = {},
  startTime: string | null = null,
): EventFileTruth {
  const o: EventFileOptions = { ...DEFAULT_EVENT_FILE_OPTIONS, ...options };
  const sp = spectrometerAu(o.spectrometer);
  const n = plan.options.size;
  const nStep = plan.steps.length;
  const rng = createPrng(plan.options.seed + 7919);
  const cal = plan.calibration;
  const f = new rt.File(path, 'w');
  const perStep: number[] = [];
  try {
    const entry = writeEntryMetadata(f, plan, null, text, startTime);
    const instrument = entry.get('instrument') as Group;
    const spec = createNxGroup(instrument, 'spectrometer', 'NXcollection');
    writeScalar(spec, 'acceleration_length', o.spectrometer.acceleration_length_m, 'm');
    writeScalar(spec, 'drift_length', o.spectrometer.drift_length_m, 'm');
    writeScalar(spec, 'electric_field', o.spectrometer.electric_field_v_per_m, 'V/m');
    writeScalar(spec, 'magnetic_field', o.spectrometer.magnetic_field_t, 'T');
    writeScalar(spec, 't0', o.spectrometer.t0_ns, 'ns');
    writeVector(spec, 'detector_center', [...o.spectrometer.detector_center_mm], 'mm');

    // one step at a time: the events of a step are drawn, then appended to the three growing datasets
    const events = createNxGroup(entry, 'events', 'NXevent_data');
    const dtype = o.dtype === 'float32' ? '<f' : '<d';
    const make = (name: string) =>
      events.create_dataset({
        name,
        data: o.dtype === 'float32' ? new Float32Array(0) : new Float64Array(0),
        shape: [0],
        maxshape: [null],
        chunks: [65536],
        dtype,
      });
    const xs = make('x');
    const ys = make('y');
    const ts = make('tof');
    const frame = new Float64Array(n * n);
    let written = 0;
    for (let k = 0; k < nStep; k++) {
      renderSignal(plan, k, frame);
      const bx: number[] = [];
      const by: number[] = [];
      const bt: number[] = [];
      for (let iy = 0; iy < n; iy++) {
        for (let ix = 0; ix < n; ix++) {
          const m = rng.poisson(frame[iy * n + ix] as number);
          for (let e = 0; e < m; e++) {
            const [u, v] = pixelToMomentum(cal, ix - 0.5 + rng.uniform(), iy - 0.5 + rng.uniform());
            const [px, py, ps] = fromImageAxes(u, v, rng.normal() * o.alongLaserSigmaAu, o.laserAxis);
            const t = flightTimeAu(ps, sp);
            const [x, y] = impactPoint(px, py, t, sp);
            bx.push(bohrToMm(x + sp.centreBohr[0]));
            by.push(bohrToMm(y + sp.centreBohr[1]));
            bt.push(auToNs(t + sp.t0));
          }
        }
      }
      perStep.push(bx.length);
      const end = written + bx.length;
      for (const [d, vals] of [
        [xs, bx],
        [ys, by],
        [ts, bt],
      ] as const) {
        d.resize([end]);
        d.write_slice([[written, end]], o.dtype === 'float32' ? Float32Array.from(vals) : Float64Array.from(vals));
      }
      written = end;
    }
    xs.create_attribute('units', 'mm');
    ys.create_attribute('units', 'mm');
    ts.create_attribute('units', 'ns');
    if (nStep > 1) {
      const step = writeVector(events, 'step', plan.stepValues);
      step.create_attribute('quantity', plan.stepQuantity);
      step.create_attribute('units', plan.stepUnits);
      const index = new BigInt64Array(nStep);
      for (let k = 1; k < nStep; k++) index[k] = index[k - 1]! + BigInt(perStep[k - 1]!);
      events.create_dataset({ name: 'event_index', data: index, shape: [nStep], dtype: '<q' });
      writeVector(events, 'shots', plan.shots);
    }
  } finally {
    f.close();
  }
  return {
    format: 'lobeline.synth-event-truth',
    version: 1,
    events_per_step: perStep,
    spectrometer: o.spectrometer,
    laser_axis: o.laserAxis,
    along_laser_sigma_au: o.alongLaserSigmaAu,
    steps: plan.steps,
  };
}
