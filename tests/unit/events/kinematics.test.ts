/**
 * Event-list kinematics (SCIENCE.md §7.7): the section's worked example (its values computed by `sec7.py` there),
 * and flight times and impact points from an independent integration of the Lorentz force with scipy
 * (tests/fixtures/numpy/events_spectrometer.py: scipy.integrate.solve_ivp, DOP853, rtol 1e-12, through the
 * acceleration region and a field-free drift in a homogeneous magnetic field), inverted by reduction/events.
 */
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import {
  addTally,
  auToNs,
  bohrToMm,
  cyclotronPeriodAu,
  emptyHistogram,
  emptyTally,
  flightTimeAu,
  histogramEvents,
  impactPoint,
  longitudinalMomentum,
  nearCyclotronNode,
  nsToAu,
  spectrometerAu,
  toImageAxes,
  transverseMomentum,
} from '@/reduction/events/kinematics';
import { cartesianGrid } from '@/reduction/grids';
import { createPrng } from '@/reduction/prng';
import { ROOT } from '../scanfile/helpers';

const SPEC_7_7 = {
  acceleration_length_m: 0.1,
  drift_length_m: 0,
  electric_field_v_per_m: 2000,
  magnetic_field_t: 0,
  t0_ns: 0,
  detector_center_mm: [0, 0] as const,
};

describe('SCIENCE.md §7.7 worked example (E_s = 2000 V/m, L = 0.100 m, electron)', () => {
  const sp = spectrometerAu(SPEC_7_7);
  it('converts the spectrometer to atomic units as the section does', () => {
    expect(sp.E).toBeCloseTo(3.889381e-9, 14); // §7.7: 3.889 381×10⁻⁹ a.u.
    expect(sp.L / 1.889726e9).toBeCloseTo(1, 6); // §7.7: 1.889 726×10⁹ bohr
  });
  it.each([
    [0.5, 8.655588e8, 20.936867],
    [0, 9.857668e8, 23.844559],
    [-0.5, 1.122669e9, 27.156069],
  ])('p_s = %s a.u. flies %s a.u. = %s ns, and the time gives p_s back to 1e-10', (ps, tAu, tNs) => {
    const t = flightTimeAu(ps, sp);
    expect(t / tAu).toBeCloseTo(1, 6);
    expect(auToNs(t)).toBeCloseTo(tNs, 5);
    expect(Math.abs(longitudinalMomentum(t, sp) - ps)).toBeLessThan(1e-10); // "returns the inputs to 10⁻¹⁰"
  });
  it('B = 10 G: cyclotron period 35.723 868 ns; p⊥ = (0.3, 0.4) lands at (−10.682 252, +1.259 706) mm and back', () => {
    const spB = spectrometerAu({ ...SPEC_7_7, magnetic_field_t: 1e-3 });
    expect(spB.omega).toBeCloseTo(4.254382e-9, 14); // §7.7: 4.254 382×10⁻⁹ a.u.
    expect(auToNs(cyclotronPeriodAu(spB))).toBeCloseTo(35.723868, 5);
    const t = nsToAu(23.844559);
    expect(spB.omega * t).toBeCloseTo(4.193829, 5); // §7.7: Ωt = 4.193 829 rad
    const [x, y] = impactPoint(0.3, 0.4, t, spB);
    expect(bohrToMm(x)).toBeCloseTo(-10.682252, 4);
    expect(bohrToMm(y)).toBeCloseTo(1.259706, 4);
    const [px, py] = transverseMomentum(x, y, t, spB);
    expect(px).toBeCloseTo(0.3, 9);
    expect(py).toBeCloseTo(0.4, 9);
  });
  it('a magnetic field tending to zero gives p = (x, y)/t (the limit §7.7 names)', () => {
    const t = nsToAu(23.844559);
    const tiny = spectrometerAu({ ...SPEC_7_7, magnetic_field_t: 1e-12 });
    const [px, py] = transverseMomentum(1e8, -2e8, t, tiny);
    expect(px / (1e8 / t)).toBeCloseTo(1, 8);
    expect(py / (-2e8 / t)).toBeCloseTo(1, 8);
  });
});

interface RefEvent {
  p: [number, number, number];
  t_ns: number;
  x_mm: number;
  y_mm: number;
}
const ref = JSON.parse(readFileSync(path.join(ROOT, 'tests/fixtures/numpy/events_spectrometer.json'), 'utf8')) as {
  cases: {
    name: string;
    spectrometer: { L_m: number; D_m: number; E_v_per_m: number; B_t: number };
    events: RefEvent[];
  }[];
};

describe('against an integration of the Lorentz force (scipy solve_ivp)', () => {
  for (const c of ref.cases) {
    it(c.name, () => {
      const sp = spectrometerAu({
        acceleration_length_m: c.spectrometer.L_m,
        drift_length_m: c.spectrometer.D_m,
        electric_field_v_per_m: c.spectrometer.E_v_per_m,
        magnetic_field_t: c.spectrometer.B_t,
        t0_ns: 0,
        detector_center_mm: [0, 0],
      });
      let checked = 0;
      for (const e of c.events) {
        // forward: the closed forms give scipy's flight time and impact point
        const t = flightTimeAu(e.p[2], sp);
        expect(auToNs(t)).toBeCloseTo(e.t_ns, 7);
        const [x, y] = impactPoint(e.p[0], e.p[1], t, sp);
        expect(bohrToMm(x)).toBeCloseTo(e.x_mm, 5);
        expect(bohrToMm(y)).toBeCloseTo(e.y_mm, 5);
        // inverse, from scipy's numbers: the momentum comes back (away from the cyclotron nodes)
        const tr = nsToAu(e.t_ns);
        expect(longitudinalMomentum(tr, sp)).toBeCloseTo(e.p[2], 7);
        if (nearCyclotronNode(tr, sp)) continue;
        const [px, py] = transverseMomentum(e.x_mm / bohrToMm(1), e.y_mm / bohrToMm(1), tr, sp);
        expect(px).toBeCloseTo(e.p[0], 5);
        expect(py).toBeCloseTo(e.p[1], 5);
        checked++;
      }
      expect(checked).toBeGreaterThanOrEqual(6);
    });
  }
});

describe('image axes (FORMATS §1.1): u × v points along the laser', () => {
  const cross = (a: number[], b: number[]) => [
    a[1]! * b[2]! - a[2]! * b[1]!,
    a[2]! * b[0]! - a[0]! * b[2]!,
    a[0]! * b[1]! - a[1]! * b[0]!,
  ];
  const LASER = {
    '+y': [0, 1, 0],
    '-y': [0, -1, 0],
    '+x': [1, 0, 0],
    '-x': [-1, 0, 0],
    '+s': [0, 0, 1],
    '-s': [0, 0, -1],
  };
  for (const [axis, along] of Object.entries(LASER) as [keyof typeof LASER, number[]][]) {
    it(`${axis}`, () => {
      // the unit vectors of u and v in the detector frame (x, y, s), read off toImageAxes
      const basis = [0, 1, 2].map((k) => toImageAxes(k === 0 ? 1 : 0, k === 1 ? 1 : 0, k === 2 ? 1 : 0, axis));
      const u = basis.map((b) => b[0]);
      const v = basis.map((b) => b[1]);
      const w = basis.map((b) => b[2]);
      expect(cross(u, v).map((c) => c + 0)).toEqual(along); // + 0 turns −0 into 0
      expect(w.map((c) => c! + 0)).toEqual(along); // the gated component is the momentum along the laser
    });
  }
});

describe('histogramming', () => {
  const sp = spectrometerAu({ ...SPEC_7_7, magnetic_field_t: 1.5e-3, t0_ns: 12.5, detector_center_mm: [0.4, -0.3] });
  const grid = cartesianGrid({ grid: { n: 101, p_max_au: 1.5 } });
  // B = 15 G: cyclotron period 23.8 ns, inside the span of flight times, so a node lies among the events.
  // events from known momenta, forward through the same spectrometer (t0 and centre added as a file would hold)
  function events(count: number, seed: number) {
    const prng = createPrng(seed);
    const rnd = () => prng.uniform();
    const x = new Float64Array(count);
    const y = new Float64Array(count);
    const tof = new Float64Array(count);
    const truth: number[][] = [];
    for (let i = 0; i < count; i++) {
      const p = [rnd() * 2.4 - 1.2, rnd() * 2.4 - 1.2, rnd() * 2.4 - 1.2];
      const t = flightTimeAu(p[2]!, sp);
      const [bx, by] = impactPoint(p[0]!, p[1]!, t, sp);
      x[i] = bohrToMm(bx + sp.centreBohr[0]);
      y[i] = bohrToMm(by + sp.centreBohr[1]);
      tof[i] = auToNs(t + sp.t0);
      truth.push(p);
    }
    return { x, y, tof, truth };
  }

  it('puts each event in the cell of its momentum, drops the gated and near-node ones, and counts them', () => {
    const ev = events(20_000, 7);
    const hist = emptyHistogram(grid);
    const conv = { spectrometer: sp, laserAxis: '+y' as const, gateAu: [-0.2, 0.2] as const };
    const tally = histogramEvents(ev.x, ev.y, ev.tof, conv, grid, hist);
    // expected by hand from the truth: +y → u = p_s, v = p_x, gate on p_y
    const expected = emptyHistogram(grid);
    let gated = 0;
    let nearNode = 0;
    for (let i = 0; i < ev.truth.length; i++) {
      const [px, py, ps] = ev.truth[i]!;
      if (nearCyclotronNode(flightTimeAu(ps!, sp), sp)) {
        nearNode++;
        continue;
      }
      if (Math.abs(py!) > 0.2) {
        gated++;
        continue;
      }
      const iu = Math.round((ps! + grid.pMaxAu) / grid.stepAu);
      const iv = Math.round((px! + grid.pMaxAu) / grid.stepAu);
      if (iu >= 0 && iu < grid.n && iv >= 0 && iv < grid.n) expected[iv * grid.n + iu]! += 1;
    }
    expect(tally.nearNode).toBe(nearNode);
    expect(nearNode).toBeGreaterThan(0); // the margin of 2 % of a period around a node catches some
    expect(tally.gated).toBe(gated);
    expect(tally.invalid).toBe(0);
    const total = tally.kept + tally.nearNode + tally.gated + tally.outsideGrid + tally.invalid;
    expect(total).toBe(ev.truth.length);
    // a momentum on a cell edge may round either way after the forward–inverse trip: allow a handful
    let differing = 0;
    for (let k = 0; k < hist.length; k++) differing += Math.abs(hist[k]! - expected[k]!);
    expect(differing).toBeLessThanOrEqual(4);
  });

  it('chunks added together equal one pass, exactly, whatever the chunk size', () => {
    const ev = events(30_001, 11);
    const conv = { spectrometer: sp, laserAxis: '-s' as const, gateAu: null };
    const one = emptyHistogram(grid);
    const oneTally = histogramEvents(ev.x, ev.y, ev.tof, conv, grid, one);
    for (const size of [1, 997, 10_000]) {
      const merged = emptyHistogram(grid);
      const tally = emptyTally();
      for (let a = 0; a < ev.x.length; a += size) {
        const b = Math.min(ev.x.length, a + size);
        const part = emptyHistogram(grid);
        addTally(
          tally,
          histogramEvents(ev.x.subarray(a, b), ev.y.subarray(a, b), ev.tof.subarray(a, b), conv, grid, part),
        );
        for (let k = 0; k < part.length; k++) merged[k]! += part[k]!;
      }
      expect(tally).toEqual(oneTally);
      expect(Buffer.from(merged.buffer).equals(Buffer.from(one.buffer))).toBe(true);
    }
  });

  it('refuses arrays of different lengths and counts times before t₀ as invalid', () => {
    const conv = { spectrometer: sp, laserAxis: '+y' as const, gateAu: null };
    const h = emptyHistogram(grid);
    expect(() => histogramEvents([1, 2], [1], [30, 30], conv, grid, h)).toThrow(/differ in length/);
    const t = histogramEvents([0, Number.NaN], [0, 0], [5, 30], conv, grid, h); // 5 ns < t0 = 12.5 ns
    expect(t.invalid).toBe(2);
  });
});
