/**
 * The event-list reader (reduction/hdf5/event-reader.ts) against files written outside the project by the HDF Group's
 * library through h5py (Debian's /usr/bin/python3): every rule of FORMATS §1.1 broken once gives a problem naming
 * its path and rule; an absurd size (2³⁴ + 1 events, a chunked dataset HDF5 never allocates) is refused from the
 * dataspace; the values read in chunks equal what h5py reads in one go; the calibration's spectrometer values
 * override the file's. Good files also come from the project's generator (reduction/synth/event-file.ts).
 */
import { statSync } from 'node:fs';
import path from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { EVENT_LIMITS, hasEventList, openEventFile, type SpectrometerOverride } from '@/reduction/hdf5/event-reader';
import type { H5Runtime } from '@/reduction/hdf5/runtime';
import { writeSynthEventScan } from '@/reduction/synth/event-file';
import { planScan } from '@/reduction/synth/model';
import { generatedDir, python, runtime } from '../scanfile/helpers';

let rt: H5Runtime;
let dir: string;

/** Writes one event file per case with h5py; each case breaks one rule of FORMATS §1.1 (or none). */
const WRITE_CASES = `
import json, sys
import h5py, numpy as np
out = sys.argv[1]
rng = np.random.default_rng(5)
N = 5000
def entry(f, kind="angular_streaking"):
  e = f.create_group("entry"); e.attrs["NX_class"] = "NXentry"
  e["experiment_kind"] = kind
  e["start_time"] = "2026-11-02T10:15:00+01:00"
  s = e.create_group("sample"); s.attrs["NX_class"] = "NXsample"; s["name"] = "Ar"
  i = e.create_group("instrument"); i.attrs["NX_class"] = "NXinstrument"
  src = i.create_group("source"); src.attrs["NX_class"] = "NXsource"
  src["wavelength"] = 800.0; src["wavelength"].attrs["units"] = "nm"
  src["ellipticity"] = 0.87; src["helicity"] = 1
  return e
def spectrometer(e, skip=()):
  sp = e["instrument"].create_group("spectrometer"); sp.attrs["NX_class"] = "NXcollection"
  vals = {"acceleration_length": (0.12, "m"), "drift_length": (0.0, "m"), "electric_field": (1800.0, "V/m"),
          "magnetic_field": (8.0e-4, "T"), "t0": (11.5, "ns")}
  for k, (v, u) in vals.items():
    if k in skip: continue
    sp[k] = v; sp[k].attrs["units"] = u
  if "detector_center" not in skip:
    sp["detector_center"] = np.array([0.25, -0.5]); sp["detector_center"].attrs["units"] = "mm"
  return sp
def events(e, n=N, dtype="f8", tof_n=None, units=True, index=None, steps=None):
  g = e.create_group("events"); g.attrs["NX_class"] = "NXevent_data"
  x = rng.normal(0, 10, n).astype(dtype); y = rng.normal(0, 10, n).astype(dtype)
  t = (25 + rng.normal(0, 1, tof_n or n)).astype(dtype if dtype != "i4" else "f8")
  for k, v, u in (("x", x, "mm"), ("y", y, "mm"), ("tof", t, "ns")):
    g.create_dataset(k, data=v, chunks=(1024,))
    if units or k != "tof": g[k].attrs["units"] = u
  if steps is not None:
    g["step"] = np.array(steps, dtype="f8"); g["step"].attrs["quantity"] = "intensity"; g["step"].attrs["units"] = "W/cm^2"
  if index is not None:
    g["event_index"] = np.array(index, dtype="i8")
  return g
cases = {}
def case(name, fn):
  p = f"{out}/{name}.h5"
  with h5py.File(p, "w") as f: fn(f)
  cases[name] = p
def good(f):
  e = entry(f); spectrometer(e); events(e, steps=[1e14, 2e14, 3e14], index=[0, 1500, 3200])
case("good", good)
case("no_t0", lambda f: (lambda e: (spectrometer(e, skip=("t0",)), events(e)))(entry(f)))
case("no_spectrometer", lambda f: events(entry(f)))
case("tof_short", lambda f: (lambda e: (spectrometer(e), events(e, tof_n=N - 3)))(entry(f)))
case("index_decreasing", lambda f: (lambda e: (spectrometer(e), events(e, steps=[1e14, 2e14, 3e14], index=[0, 3000, 2000])))(entry(f)))
case("index_beyond", lambda f: (lambda e: (spectrometer(e), events(e, steps=[1e14, 2e14], index=[0, N + 1])))(entry(f)))
case("index_not_zero", lambda f: (lambda e: (spectrometer(e), events(e, steps=[1e14, 2e14], index=[7, 100])))(entry(f)))
case("index_missing", lambda f: (lambda e: (spectrometer(e), events(e, steps=[1e14, 2e14])))(entry(f)))
case("x_int", lambda f: (lambda e: (spectrometer(e), events(e, dtype="i4")))(entry(f)))
case("tof_no_units", lambda f: (lambda e: (spectrometer(e), events(e, units=False)))(entry(f)))
def huge(f):
  e = entry(f); spectrometer(e)
  g = e.create_group("events"); g.attrs["NX_class"] = "NXevent_data"
  for k, u in (("x", "mm"), ("y", "mm"), ("tof", "ns")):
    d = g.create_dataset(k, shape=(2**34 + 1,), dtype="f4", chunks=(1 << 20,))  # never written: no storage
    d.attrs["units"] = u
case("huge", huge)
with h5py.File(cases["good"], "r") as f:
  g = f["entry/events"]
  ref = {k: [float(v) for v in g[k][()]] for k in ("x", "y", "tof")}
print(json.dumps({"cases": cases, "good": ref}))
`;

let cases: Record<string, string>;
let goodRef: { x: number[]; y: number[]; tof: number[] };

beforeAll(async () => {
  rt = await runtime();
  dir = generatedDir('event-reader');
  const r = python<{ cases: Record<string, string>; good: { x: number[]; y: number[]; tof: number[] } }>(WRITE_CASES, [
    dir,
  ]);
  cases = r.cases;
  goodRef = r.good;
});

function problemsOf(name: string, spectrometer?: SpectrometerOverride) {
  const r = openEventFile(rt, cases[name]!, { spectrometer });
  if (r.ok) {
    r.scan.close();
    throw new Error(`${name} was accepted`);
  }
  return r.problems;
}

describe('event files written by h5py (FORMATS §1.1)', () => {
  it('reads a good file: steps from event_index, spectrometer values, chunks equal to h5py’s one-go read', () => {
    expect(hasEventList(rt, cases.good!)).toBe(true);
    const r = openEventFile(rt, cases.good!);
    if (!r.ok) throw new Error(r.problems.map((p) => p.message).join('\n'));
    const s = r.scan;
    try {
      expect(s.events.nEvents).toBe(5000);
      expect(s.events.stepStart).toEqual([0, 1500, 3200]);
      expect(s.events.stepEvents).toEqual([1500, 1700, 1800]);
      expect(s.meta.shape.nStep).toBe(3);
      expect(s.meta.step).toEqual({ quantity: 'intensity', units: 'W/cm^2', values: [1e14, 2e14, 3e14] });
      expect(s.meta.events?.count).toBe(5000);
      expect(s.events.spectrometer).toEqual({
        acceleration_length_m: 0.12,
        drift_length_m: 0,
        electric_field_v_per_m: 1800,
        magnetic_field_t: 8e-4,
        t0_ns: 11.5,
        detector_center_mm: [0.25, -0.5],
      });
      expect(Object.values(s.events.spectrometerSource).every((v) => v === 'file')).toBe(true);
      // chunks of 333 events (not a divisor of the step sizes nor of the 1024-event storage chunks)
      const got = { x: [] as number[], y: [] as number[], tof: [] as number[] };
      let maxChunk = 0;
      for (let k = 0; k < 3; k++) {
        for (const c of s.stepChunks(k, 333)) {
          maxChunk = Math.max(maxChunk, c.x.length);
          got.x.push(...Array.from(c.x));
          got.y.push(...Array.from(c.y));
          got.tof.push(...Array.from(c.tof));
        }
      }
      expect(maxChunk).toBe(333);
      expect(got).toEqual(goodRef);
    } finally {
      s.close();
    }
  });

  it.each([
    ['no_t0', '/entry/instrument/spectrometer/t0', 'required'],
    ['no_spectrometer', '/entry/instrument/spectrometer', 'required for event files'],
    ['tof_short', '/entry/events/tof', 'has 4997 events but /entry/events/x has 5000'],
    ['index_decreasing', '/entry/events/event_index', 'must never decrease'],
    ['index_beyond', '/entry/events/event_index', 'beyond the 5000 events'],
    ['index_not_zero', '/entry/events/event_index', 'must start at 0'],
    ['index_missing', '/entry/events/event_index', 'required with /entry/events/step'],
    ['x_int', '/entry/events/x', 'must be float32 or float64'],
    ['tof_no_units', '/entry/events/tof@units', 'must be "ns" but missing'],
  ])('%s: refused with the path %s and the rule', (name, where, words) => {
    const ps = problemsOf(name);
    const p = ps.find((q) => q.path === where);
    expect(p, ps.map((q) => q.message).join('\n')).toBeDefined();
    expect(p!.rule).toContain(words);
  });

  it('refuses 2^34 + 1 events from the dataspace alone, before reading', () => {
    // the file stays small: HDF5 allocates no chunk that was never written
    expect(statSync(cases.huge!).size).toBeLessThan(1e6);
    const ps = problemsOf('huge');
    for (const name of ['x', 'y', 'tof']) {
      const p = ps.find((q) => q.path === `/entry/events/${name}`);
      expect(p?.rule).toContain(`${2 ** 34 + 1} events exceed the limit of 2^34`);
      expect(p?.rule).toContain('refused before reading');
    }
    expect(EVENT_LIMITS.maxEvents).toBe(2 ** 34);
  });

  it('takes each spectrometer value the calibration gives over the file’s; a missing one is then no problem', () => {
    const r = openEventFile(rt, cases.no_t0!, { spectrometer: { t0: 9.75, electric_field: 2100 } });
    if (!r.ok) throw new Error(r.problems.map((p) => p.message).join('\n'));
    try {
      expect(r.scan.events.spectrometer.t0_ns).toBe(9.75);
      expect(r.scan.events.spectrometer.electric_field_v_per_m).toBe(2100);
      expect(r.scan.events.fileSpectrometer.electric_field).toBe(1800);
      expect(r.scan.events.spectrometer.acceleration_length_m).toBe(0.12);
      expect(r.scan.events.spectrometerSource).toMatchObject({
        t0: 'calibration',
        electric_field: 'calibration',
        acceleration_length: 'file',
      });
    } finally {
      r.scan.close();
    }
    // a whole spectrometer from the calibration replaces a missing group
    const all = openEventFile(rt, cases.no_spectrometer!, {
      spectrometer: { acceleration_length: 0.1, electric_field: 2000, t0: 10 },
    });
    expect(all.ok).toBe(true);
    if (all.ok) {
      expect(all.scan.events.spectrometer.magnetic_field_t).toBe(0);
      expect(all.scan.events.spectrometer.detector_center_mm).toEqual([0, 0]);
      all.scan.close();
    }
  });
});

describe('event files of the generator', () => {
  it('open with the generator’s truth: events per step, spectrometer, steps', () => {
    const file = path.join(dir, 'synth-2step.h5');
    const plan = planScan({ kind: 'angular_streaking', steps: 2, size: 64, counts: 3000, seed: 4 });
    const truth = writeSynthEventScan(rt, file, plan);
    const r = openEventFile(rt, file);
    if (!r.ok) throw new Error(r.problems.map((p) => p.message).join('\n'));
    try {
      expect(r.scan.events.stepEvents).toEqual(truth.events_per_step);
      expect(r.scan.events.spectrometer).toEqual(truth.spectrometer);
      expect(r.scan.meta.step.values).toEqual(plan.stepValues);
      expect(r.scan.meta.experimentKind).toBe('angular_streaking');
      expect(r.warnings).toEqual([]);
    } finally {
      r.scan.close();
    }
  });
});
