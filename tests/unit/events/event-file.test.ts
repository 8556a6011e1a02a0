/**
 * The event-list example generator (reduction/synth/event-file.ts) read back outside the project: h5py (the HDF
 * Group's library through Debian's /usr/bin/python3) checks the layout of FORMATS §1.1, and numpy inverts the events
 * with the closed forms of SCIENCE.md §7.7 written out again in Python (single acceleration region with a magnetic
 * field: p_s = L/t − E t/2, p⊥ from the cyclotron rotation). The lobes' directions in the image plane must then be
 * the plan's true lobe angles within their statistical error.
 */
import path from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { fromImageAxes, toImageAxes } from '@/reduction/events/kinematics';
import type { H5Runtime } from '@/reduction/hdf5/runtime';
import { type EventFileTruth, writeSynthEventScan } from '@/reduction/synth/event-file';
import { planScan } from '@/reduction/synth/model';
import { generatedDir, python, runtime } from '../scanfile/helpers';

let rt: H5Runtime;
beforeAll(async () => {
  rt = await runtime();
});

const READ_BACK = `
import json, sys
import h5py, numpy as np
f = h5py.File(sys.argv[1], "r")
truth = json.load(open(sys.argv[2]))
ev = f["entry/events"]
sp = f["entry/instrument/spectrometer"]
out = {
  "events_class": ev.attrs["NX_class"].decode() if isinstance(ev.attrs["NX_class"], bytes) else ev.attrs["NX_class"],
  "spec_class": sp.attrs["NX_class"].decode() if isinstance(sp.attrs["NX_class"], bytes) else sp.attrs["NX_class"],
  "units": {k: (ev[k].attrs["units"].decode() if isinstance(ev[k].attrs["units"], bytes) else ev[k].attrs["units"]) for k in ("x", "y", "tof")},
  "spec_units": {k: (sp[k].attrs["units"].decode() if isinstance(sp[k].attrs["units"], bytes) else sp[k].attrs["units"]) for k in sp},
  "lengths": [int(ev[k].shape[0]) for k in ("x", "y", "tof")],
  "event_index": [int(v) for v in ev["event_index"][()]],
  "event_index_dtype": str(ev["event_index"].dtype),
  "step": [float(v) for v in ev["step"][()]],
  "has_counts": "entry/data/counts" in f,
}
# SCIENCE 7.7 in atomic units (CODATA 2018 conversions, SCIENCE 1.1)
BOHR_MM = 5.29177210903e-11 * 1e3; AU_NS = 2.4188843265857e-17 * 1e9
L = sp["acceleration_length"][()] / 5.29177210903e-11
E = sp["electric_field"][()] / 5.14220674763e11
W = sp["magnetic_field"][()] / 2.35051756758e5
t0 = sp["t0"][()] / AU_NS
c = sp["detector_center"][()] / BOHR_MM
t = ev["tof"][()] / AU_NS - t0
x = ev["x"][()] / BOHR_MM - c[0]; y = ev["y"][()] / BOHR_MM - c[1]
ps = L / t - E * t / 2
a = W * t / 2
cot = np.cos(a) / np.sin(a)
px = W / 2 * (x * cot + y); py = W / 2 * (y * cot - x)
period = 2 * np.pi / W
nn = np.maximum(1, np.round(t / period))
keep = np.abs(t - nn * period) >= 0.02 * period
# laser along +y: image axes (u, v) = (p_s, p_x)
u, v = ps, px
idx = list(ev["event_index"][()]) + [len(t)]
steps = []
for k, st in enumerate(truth["steps"]):
  sl = slice(idx[k], idx[k + 1])
  uu, vv, kk = u[sl], v[sl], keep[sl]
  phi = np.degrees(np.arctan2(vv, uu))
  lobes = []
  for lobe in st["lobes"]:
    d = (phi - lobe["angle_deg"] + 180) % 360 - 180
    m = kk & (np.abs(d) < 60)
    # circular mean of the events within +-60 deg of the true direction, and its standard error
    mean = np.degrees(np.arctan2(np.mean(np.sin(np.radians(d[m]))), np.mean(np.cos(np.radians(d[m])))))
    se = np.degrees(np.std(np.radians(d[m])) / np.sqrt(m.sum()))
    lobes.append({"offset_from_truth_deg": float(mean), "se_deg": float(se), "n": int(m.sum())})
  steps.append(lobes)
out["steps"] = steps
out["dropped_near_node"] = int((~keep).sum())
print(json.dumps(out))
`;

describe('event-list example files (FORMATS §1.1)', () => {
  it('are read by h5py with the layout of §1.1, and numpy finds the true lobe directions in them', async () => {
    const { writeFileSync } = await import('node:fs');
    const dir = generatedDir('events');
    const file = path.join(dir, 'as-3step.h5');
    const plan = planScan({ kind: 'angular_streaking', steps: 3, size: 128, counts: 2e4, seed: 31 });
    const truth: EventFileTruth = writeSynthEventScan(rt, file, plan);
    const truthFile = `${file}.truth.json`;
    writeFileSync(truthFile, JSON.stringify(truth));
    const r = python<{
      events_class: string;
      spec_class: string;
      units: Record<string, string>;
      spec_units: Record<string, string>;
      lengths: number[];
      event_index: number[];
      event_index_dtype: string;
      step: number[];
      has_counts: boolean;
      steps: { offset_from_truth_deg: number; se_deg: number; n: number }[][];
      dropped_near_node: number;
    }>(READ_BACK, [file, truthFile]);
    expect(r.events_class).toBe('NXevent_data');
    expect(r.spec_class).toBe('NXcollection');
    expect(r.units).toEqual({ x: 'mm', y: 'mm', tof: 'ns' });
    expect(r.spec_units).toMatchObject({
      acceleration_length: 'm',
      drift_length: 'm',
      electric_field: 'V/m',
      magnetic_field: 'T',
      t0: 'ns',
      detector_center: 'mm',
    });
    const total = truth.events_per_step.reduce((a, b) => a + b, 0);
    expect(r.lengths).toEqual([total, total, total]);
    expect(r.event_index_dtype).toBe('int64');
    expect(r.event_index).toEqual([0, truth.events_per_step[0], truth.events_per_step[0]! + truth.events_per_step[1]!]);
    expect(r.step).toEqual(plan.stepValues);
    expect(r.has_counts).toBe(false);
    // Poisson: each step holds its expected signal counts within 5 standard deviations
    truth.events_per_step.forEach((nk, k) => {
      const mu = plan.steps[k]!.signal_counts * (1 + plan.isotropicFraction);
      expect(Math.abs(nk - mu)).toBeLessThan(5 * Math.sqrt(mu));
    });
    for (const lobes of r.steps) {
      expect(lobes).toHaveLength(2);
      for (const l of lobes) {
        expect(l.n).toBeGreaterThan(3000);
        // 4 standard errors, plus 0.3° for the ±60° window cutting a lobe whose true shape includes the pixel grid
        expect(Math.abs(l.offset_from_truth_deg)).toBeLessThan(4 * l.se_deg + 0.3);
      }
    }
  });

  it('fromImageAxes undoes toImageAxes for every laser axis', () => {
    for (const axis of ['+y', '-y', '+x', '-x', '+s', '-s'] as const) {
      const [px, py, ps] = fromImageAxes(0.3, -0.7, 0.11, axis);
      expect(toImageAxes(px, py, ps, axis)).toEqual([0.3, -0.7, 0.11]);
    }
  });
});
