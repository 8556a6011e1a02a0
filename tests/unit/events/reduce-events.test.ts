/**
 * Event scans through the image reducer (reduction/events/reduce-events.ts): a generated event file with a known
 * truth (reduction/synth/event-file.ts: momenta from the image generator's physics, sent forward through the
 * spectrometer of SCIENCE.md §7.7 with a magnetic field) is read by the event reader in chunks and must reduce to
 * the truth's offset within the reported bootstrap error; any chunking gives exactly the one-pass histogram; the
 * events dropped near cyclotron nodes are counted and agree with an independent numpy count (Debian's numpy via
 * /usr/bin/python3, §7.7 written out again in Python).
 */
import path from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { createEventReducer, histogramChunk } from '@/reduction/events/reduce-events';
import { analysisSettingsSchema, detectorCalibrationSchema } from '@/reduction/formats';
import { openEventFileOrThrow } from '@/reduction/hdf5/event-reader';
import type { H5Runtime } from '@/reduction/hdf5/runtime';
import { DEFAULT_EVENT_FILE_OPTIONS, type EventFileTruth, writeSynthEventScan } from '@/reduction/synth/event-file';
import { planScan } from '@/reduction/synth/model';
import { generatedDir, python, runtime } from '../scanfile/helpers';

let rt: H5Runtime;
let file: string;
let truth: EventFileTruth;
let nodeFile: string;

// the lab's stored calibration version: an image calibration is still a valid one; only `spectrometer` applies
const calibration = detectorCalibrationSchema.parse({ center_px: [0, 0], momentum_per_pixel_au: 1 });
const settings = analysisSettingsSchema.parse({
  fit_half_width_deg: 45,
  bootstrap: { resamples: 60, seed: 99 },
  events: { laser_axis: '+y', gate_au: { axis: 'laser', range: [-0.15, 0.15] }, chunk_events: 7001 },
});

beforeAll(async () => {
  rt = await runtime();
  file = path.join(generatedDir('reduce-events'), 'as-2step.h5');
  const plan = planScan({ kind: 'angular_streaking', steps: 2, size: 96, counts: 6e4, seed: 17, offsetDeg: 6 });
  truth = writeSynthEventScan(rt, file, plan);
  // a stronger field puts the first cyclotron node (24.5 ns) inside the flight times (21–27 ns after t₀)
  nodeFile = path.join(generatedDir('reduce-events'), 'as-node.h5');
  const nodePlan = planScan({ kind: 'angular_streaking', steps: 2, size: 64, counts: 2e4, seed: 5 });
  writeSynthEventScan(rt, nodeFile, nodePlan, {
    spectrometer: { ...DEFAULT_EVENT_FILE_OPTIONS.spectrometer, magnetic_field_t: 1.458e-3 },
  });
});

function reduceWith(chunk: number, which = file) {
  const scan = openEventFileOrThrow(rt, which);
  try {
    const r = createEventReducer({
      meta: scan.meta,
      spectrometer: scan.events.spectrometer,
      spectrometerSource: scan.events.spectrometerSource,
      calibration,
      settings,
    });
    const hists: Float64Array[] = [];
    for (let k = 0; k < scan.meta.shape.nStep; k++) {
      for (const c of scan.stepChunks(k, chunk)) r.addChunk(k, c);
      hists.push(Float64Array.from(r.histogram(k)));
      r.finishStep(k);
    }
    return { ...r.finish(), hists };
  } finally {
    scan.close();
  }
}

describe('event scans reduce through the image reducer', () => {
  it('recover the true offset of each step within the reported error, with node drops counted', () => {
    const { result } = reduceWith(settings.events!.chunk_events);
    expect(result.steps).toHaveLength(2);
    result.steps.forEach((s, k) => {
      const want = truth.steps[k]!.offset_deg!;
      expect(s.offset_err_deg).toBeGreaterThan(0);
      expect(Math.abs(s.offset_deg! - want), `step ${k}: ${s.offset_deg} ± ${s.offset_err_deg}`).toBeLessThan(
        3 * s.offset_err_deg!,
      );
      for (const [i, l] of s.lobes.entries()) {
        expect(l.expected_deg).toBe(truth.steps[k]!.lobes[i]!.expected_deg);
        // radius of the truth within 3σ plus one grid cell (the generator's pixels vs the grid's cells)
        expect(Math.abs(l.radius_au! - truth.steps[k]!.lobes[i]!.radius_au)).toBeLessThan(
          3 * (s.radius_err_au ?? 0) + 0.01,
        );
      }
    });
    const ev = result.events!;
    expect(ev.n_events).toBe(truth.events_per_step.reduce((a, b) => a + b, 0));
    expect(ev.steps.map((s) => s.events)).toEqual(truth.events_per_step);
    for (const s of ev.steps) expect(s.kept + s.near_node + s.gated + s.outside_grid + s.invalid).toBe(s.events);
    expect(ev.cyclotron_period_ns).toBeCloseTo(35.723868, 5); // SCIENCE §7.7: B = 1.0e-3 T
    expect(result.calibration).toEqual(calibration);
    expect(result.input.experiment_kind).toBe('angular_streaking');
  });

  it('counts near-node drops as numpy does, and warns about them', () => {
    const { result } = reduceWith(50_000, nodeFile);
    const py = python<{ near: number[] }>(
      `
import json, sys, h5py, numpy as np
f = h5py.File(sys.argv[1], "r"); ev = f["entry/events"]; sp = f["entry/instrument/spectrometer"]
AU_NS = 2.4188843265857e-8
t = ev["tof"][()] / AU_NS - sp["t0"][()] / AU_NS
W = sp["magnetic_field"][()] / 2.35051756758e5
T = 2 * np.pi / W
n = np.maximum(1, np.round(t / T))
near = np.abs(t - n * T) < 0.02 * T
idx = list(ev["event_index"][()]) + [len(t)]
print(json.dumps({"near": [int(near[idx[k]:idx[k + 1]].sum()) for k in range(len(idx) - 1)]}))
`,
      [nodeFile],
    );
    expect(result.events!.steps.map((s) => s.near_node)).toEqual(py.near);
    expect(py.near.every((v) => v > 100)).toBe(true);
    py.near.forEach((v, k) => {
      const said = result.warnings.find((w) => w.startsWith(`${v} events (`) && w.endsWith(`(step ${k}).`));
      expect(said, result.warnings.join('\n')).toContain('cyclotron period of a node');
    });
  });

  it('gives exactly the one-pass histogram and result for any chunking', () => {
    const one = reduceWith(10_000_000);
    const small = reduceWith(997);
    for (let k = 0; k < 2; k++) expect(small.hists[k]).toEqual(one.hists[k]);
    expect(small.result.steps).toEqual(one.result.steps);
    expect(small.result.events!.steps).toEqual(one.result.events!.steps);
    expect(one.hists[0]!.reduce((a, b) => a + b, 0)).toBe(one.result.events!.steps[0]!.kept);
  });

  it('partial histograms of a split step, made apart and merged in any order, give the one-pass result exactly', () => {
    const one = reduceWith(10_000_000);
    const scan = openEventFileOrThrow(rt, file);
    try {
      const r = createEventReducer({ meta: scan.meta, spectrometer: scan.events.spectrometer, calibration, settings });
      for (let k = 0; k < scan.meta.shape.nStep; k++) {
        // uneven ranges, as chunk jobs of another worker would take them, merged last first
        const start = scan.events.stepStart[k]!;
        const n = scan.events.stepEvents[k]!;
        const cuts = [0, Math.floor(n * 0.13), Math.floor(n * 0.5), Math.floor(n * 0.51), n];
        const parts = cuts.slice(1).map((b, i) => {
          const a = cuts[i]!;
          return histogramChunk(scan.readEvents(start + a, b - a), scan.events.spectrometer, settings);
        });
        for (const p of parts.reverse()) r.addHistogram(k, p.hist, p.tally);
        expect(r.histogram(k)).toEqual(one.hists[k]);
        r.finishStep(k);
      }
      const merged = r.finish();
      expect(merged.result.steps).toEqual(one.result.steps);
      expect(merged.result.events!.steps).toEqual(one.result.events!.steps);
    } finally {
      scan.close();
    }
  });
});
