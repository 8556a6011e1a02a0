/**
 * Reaction-microscope and delay-line events (x, y, time of flight) → electron momenta, and back (SCIENCE.md §7.7),
 * plus histogramming on the Cartesian momentum grid of the analysis settings (§7.8, FORMATS §1.1 and §3).
 *
 * Units: the file's units on the way in (mm, ns, m, V/m, T), atomic units inside and for momenta. Electrons only
 * (charge −1, mass 1 in a.u.). Geometry of §7.7: ŝ points from the interaction point to the detector, the field
 * accelerates the electron toward the detector over the acceleration length L, an optional field-free drift D
 * follows (Wiley–McLaren), an optional homogeneous magnetic field B lies along ŝ, and (x, y, ŝ) is right-handed.
 *
 * - Longitudinal: single region p_s = L/t − E t/2 (closed form); with a drift, t(p_s) is monotonic and is inverted
 *   by Newton's method from the single-region value, kept inside a bracket (bisection when a step leaves it).
 * - Transverse: without B, p = (x, y)/t; with B, Ω = +B (electron, a.u.), α = Ωt/2,
 *   p_x = (Ω/2)(x cot α + y), p_y = (Ω/2)(y cot α − x). Near the cyclotron nodes t = n·2π/|Ω| (n ≥ 1) p⊥ is
 *   undefined; events within `NODE_FRACTION` of a period from a node are dropped and counted (FORMATS §1.1).
 * - The laser axis (setting `events.laser_axis`) picks the image axes (u, v) with u × v along the laser, and the
 *   momentum along the laser is gated (`events.gate_au`).
 */
import { AU_FIELD_V_PER_M, AU_MAGNETIC_T, AU_TIME_S, BOHR_M } from '../constants';
import type { CartesianGrid } from '../grids';

// TYPES //

/** Spectrometer values in the file's units (FORMATS §1.1 `instrument/spectrometer`). */
export interface SpectrometerSi {
  acceleration_length_m: number;
  drift_length_m: number;
  electric_field_v_per_m: number;
  magnetic_field_t: number;
  t0_ns: number;
  detector_center_mm: readonly [number, number];
}

/** The same in atomic units (lengths in bohr, field in a.u., times in a.u.). */
export interface SpectrometerAu {
  L: number;
  D: number;
  E: number;
  /** Signed cyclotron frequency Ω = +B for an electron (a.u.); 0 without a magnetic field. */
  omega: number;
  t0: number;
  centreBohr: readonly [number, number];
}

export type LaserAxis = '+y' | '-y' | '+x' | '-x' | '+s' | '-s';

export interface EventConversion {
  spectrometer: SpectrometerAu;
  laserAxis: LaserAxis;
  /** Accepted range of the momentum along the laser axis, a.u. (null: no gate). */
  gateAu: readonly [number, number] | null;
}

/** What became of a chunk's events. */
export interface EventTally {
  /** Events counted into the histogram. */
  kept: number;
  /** Dropped: within the node margin of a cyclotron node. */
  nearNode: number;
  /** Dropped: momentum along the laser outside the gate. */
  gated: number;
  /** Dropped: outside the momentum grid. */
  outsideGrid: number;
  /** Dropped: not a number, or a flight time not after t₀ (or one no electron of this spectrometer can have). */
  invalid: number;
}

// CONSTANTS //

const MM_PER_BOHR = BOHR_M * 1e3;
const NS_PER_AU = AU_TIME_S * 1e9;

/** Fraction of a cyclotron period around each node within which events are dropped (FORMATS §1.1). */
export const NODE_FRACTION = 0.02;

// FUNCTIONS //

/**
 * Spectrometer values in atomic units.
 *
 * @param s - values in the file's units
 * @returns the same in a.u.
 * @example
 * spectrometerAu({ acceleration_length_m: 0.1, drift_length_m: 0, electric_field_v_per_m: 2000,
 *   magnetic_field_t: 0, t0_ns: 0, detector_center_mm: [0, 0] }).E; // returns 3.889381e-9
 */
export function spectrometerAu(s: SpectrometerSi): SpectrometerAu {
  return {
    L: s.acceleration_length_m / BOHR_M,
    D: s.drift_length_m / BOHR_M,
    E: s.electric_field_v_per_m / AU_FIELD_V_PER_M,
    omega: s.magnetic_field_t / AU_MAGNETIC_T,
    t0: s.t0_ns / NS_PER_AU,
    centreBohr: [s.detector_center_mm[0] / MM_PER_BOHR, s.detector_center_mm[1] / MM_PER_BOHR],
  };
}

export function mmToBohr(mm: number): number {
  return mm / MM_PER_BOHR;
}
export function bohrToMm(bohr: number): number {
  return bohr * MM_PER_BOHR;
}
export function nsToAu(ns: number): number {
  return ns / NS_PER_AU;
}
export function auToNs(t: number): number {
  return t * NS_PER_AU;
}

/** Cyclotron period 2π/|Ω| in a.u. (Infinity without a magnetic field). */
export function cyclotronPeriodAu(sp: SpectrometerAu): number {
  return sp.omega === 0 ? Number.POSITIVE_INFINITY : (2 * Math.PI) / Math.abs(sp.omega);
}

/**
 * Flight time (a.u., after t₀) of an electron of longitudinal momentum p_s: single region, or Wiley–McLaren with
 * the drift (§7.7). NaN if the electron never reaches the detector (cannot happen for E > 0).
 */
export function flightTimeAu(ps: number, sp: SpectrometerAu): number {
  const vL = Math.sqrt(ps * ps + 2 * sp.E * sp.L);
  const tAcc = (vL - ps) / sp.E; // the stable root of L = p t + E t²/2
  return sp.D > 0 ? tAcc + sp.D / vL : tAcc;
}

/**
 * Longitudinal momentum (a.u.) from the flight time t (a.u., after t₀).
 *
 * @returns p_s, or NaN when no momentum gives this time (t ≤ 0, or beyond what a drift allows)
 */
export function longitudinalMomentum(t: number, sp: SpectrometerAu): number {
  if (!(t > 0)) return Number.NaN;
  const single = sp.L / t - (sp.E * t) / 2;
  if (!(sp.D > 0)) return single;
  // t(p) decreases monotonically with p. Newton from the single-region value (it converges in a few steps on any
  // ordinary spectrometer); only if a step goes astray, bracket the root and bisect.
  let p = single;
  for (let i = 0; i < 40; i++) {
    const vL = Math.sqrt(p * p + 2 * sp.E * sp.L);
    const f = (vL - p) / sp.E + sp.D / vL - t;
    // d t/d p: acceleration part (p/vL − 1)/E, drift part −D p/vL³
    const dt = (p / vL - 1) / sp.E - (sp.D * p) / (vL * vL * vL);
    const next = p - f / dt;
    if (!Number.isFinite(next)) break;
    if (Math.abs(next - p) <= 1e-13 * Math.max(1, Math.abs(p))) return next;
    p = next;
  }
  return bracketedMomentum(t, sp, single);
}

/** The slow, safe way: bracket the root of t(p) = t, then bisect to the last bit. */
function bracketedMomentum(t: number, sp: SpectrometerAu, start: number): number {
  let lo = start - 1;
  let hi = start + 1;
  for (let k = 0; flightTimeAu(lo, sp) < t; k++) {
    lo -= 2 ** k;
    if (k > 60) return Number.NaN; // slower than any electron of this spectrometer can be
  }
  for (let k = 0; flightTimeAu(hi, sp) > t; k++) {
    hi += 2 ** k;
    if (k > 60) return Number.NaN;
  }
  for (let i = 0; i < 200 && hi - lo > 1e-15 * Math.max(1, Math.abs(lo)); i++) {
    const mid = (lo + hi) / 2;
    if (flightTimeAu(mid, sp) > t) lo = mid;
    else hi = mid;
  }
  return (lo + hi) / 2;
}

/**
 * Transverse momentum (a.u.) from the impact point (bohr, from the detector centre) and the flight time (a.u.).
 * Writes [p_x, p_y] into `out` and returns it.
 */
export function transverseMomentum(
  x: number,
  y: number,
  t: number,
  sp: SpectrometerAu,
  out: [number, number] = [0, 0],
): [number, number] {
  if (sp.omega === 0) {
    out[0] = x / t;
    out[1] = y / t;
    return out;
  }
  const alpha = (sp.omega * t) / 2;
  const cot = Math.cos(alpha) / Math.sin(alpha);
  const h = sp.omega / 2;
  out[0] = h * (x * cot + y);
  out[1] = h * (y * cot - x);
  return out;
}

/**
 * Impact point (bohr, from the detector centre) of an electron of transverse momentum (p_x, p_y) after flight time
 * t (a.u.): the inverse of `transverseMomentum`. With B, inverting its 2 × 2 matrix (determinant 1/sin²α):
 * x = (2/Ω)(p_x sin α cos α − p_y sin²α), y = (2/Ω)(p_x sin²α + p_y sin α cos α).
 */
export function impactPoint(px: number, py: number, t: number, sp: SpectrometerAu): [number, number] {
  if (sp.omega === 0) return [px * t, py * t];
  const alpha = (sp.omega * t) / 2;
  const s = Math.sin(alpha);
  const c = Math.cos(alpha);
  const k = 2 / sp.omega;
  return [k * (px * s * c - py * s * s), k * (px * s * s + py * s * c)];
}

/** Whether a flight time (a.u.) lies within the node margin of a cyclotron node n ≥ 1. */
export function nearCyclotronNode(t: number, sp: SpectrometerAu, fraction = NODE_FRACTION): boolean {
  if (sp.omega === 0) return false;
  const period = cyclotronPeriodAu(sp);
  const n = Math.max(1, Math.round(t / period));
  return Math.abs(t - n * period) < fraction * period;
}

/**
 * Image axes (u, v) and the component along the laser, from detector-frame momenta (p_x, p_y, p_s), as FORMATS
 * §1.1 orders them (u × v along the laser). Writes [u, v, along] into `out`.
 */
export function toImageAxes(
  px: number,
  py: number,
  ps: number,
  axis: LaserAxis,
  out: [number, number, number] = [0, 0, 0],
): [number, number, number] {
  switch (axis) {
    case '+y':
      out[0] = ps;
      out[1] = px;
      out[2] = py;
      break;
    case '-y':
      out[0] = px;
      out[1] = ps;
      out[2] = -py;
      break;
    case '+x':
      out[0] = py;
      out[1] = ps;
      out[2] = px;
      break;
    case '-x':
      out[0] = ps;
      out[1] = py;
      out[2] = -px;
      break;
    case '+s':
      out[0] = px;
      out[1] = py;
      out[2] = ps;
      break;
    case '-s':
      out[0] = py;
      out[1] = px;
      out[2] = -ps;
      break;
  }
  return out;
}

/**
 * Detector-frame momentum (p_x, p_y, p_s) of an electron with image-plane momentum (u, v) and `along` the laser:
 * the inverse of toImageAxes.
 */
export function fromImageAxes(u: number, v: number, along: number, axis: LaserAxis): [number, number, number] {
  switch (axis) {
    case '+y':
      return [v, along, u];
    case '-y':
      return [u, -along, v];
    case '+x':
      return [along, u, v];
    case '-x':
      return [-along, v, u];
    case '+s':
      return [u, v, along];
    case '-s':
      return [v, u, -along];
  }
}

/** An empty n × n histogram for `grid` ([v][u] row-major, as images are [py][px]). */
export function emptyHistogram(grid: CartesianGrid): Float64Array {
  return new Float64Array(grid.n * grid.n);
}

export function emptyTally(): EventTally {
  return { kept: 0, nearNode: 0, gated: 0, outsideGrid: 0, invalid: 0 };
}

/** Adds the counts of `tally` to `into` (returns `into`). */
export function addTally(into: EventTally, tally: EventTally): EventTally {
  into.kept += tally.kept;
  into.nearNode += tally.nearNode;
  into.gated += tally.gated;
  into.outsideGrid += tally.outsideGrid;
  into.invalid += tally.invalid;
  return into;
}

/**
 * Converts one chunk of events and counts them into `hist` (cells of the Cartesian grid; a cell i holds
 * [c_i − Δ/2, c_i + Δ/2)). Counting is in float64, exact for integer counts below 2⁵³, so histograms of chunks
 * added together equal one pass over the whole list, whatever the chunking.
 *
 * @param xMm - impact x of each event, mm (detector frame)
 * @param yMm - impact y, mm
 * @param tofNs - measured flight time, ns (t₀ not yet subtracted)
 * @param conv - spectrometer in a.u., laser axis and gate
 * @param grid - the momentum grid of the settings
 * @param hist - histogram to add to (length n²)
 * @returns what became of the chunk's events
 */
export function histogramEvents(
  xMm: ArrayLike<number>,
  yMm: ArrayLike<number>,
  tofNs: ArrayLike<number>,
  conv: EventConversion,
  grid: CartesianGrid,
  hist: Float64Array,
): EventTally {
  const n = xMm.length;
  if (yMm.length !== n || tofNs.length !== n) {
    throw new RangeError(`event arrays differ in length (x ${n}, y ${yMm.length}, tof ${tofNs.length})`);
  }
  if (hist.length !== grid.n * grid.n) throw new RangeError('histogram does not match the grid');
  const sp = conv.spectrometer;
  const tally = emptyTally();
  const pt: [number, number] = [0, 0];
  const img: [number, number, number] = [0, 0, 0];
  const half = grid.pMaxAu + grid.stepAu / 2;
  const inv = 1 / grid.stepAu;
  const [gLo, gHi] = conv.gateAu ?? [Number.NEGATIVE_INFINITY, Number.POSITIVE_INFINITY];
  for (let i = 0; i < n; i++) {
    const t = nsToAu(tofNs[i] as number) - sp.t0;
    const x = mmToBohr(xMm[i] as number) - sp.centreBohr[0];
    const y = mmToBohr(yMm[i] as number) - sp.centreBohr[1];
    if (!(t > 0) || !Number.isFinite(x) || !Number.isFinite(y)) {
      tally.invalid++;
      continue;
    }
    if (nearCyclotronNode(t, sp)) {
      tally.nearNode++;
      continue;
    }
    const ps = longitudinalMomentum(t, sp);
    if (!Number.isFinite(ps)) {
      tally.invalid++;
      continue;
    }
    transverseMomentum(x, y, t, sp, pt);
    toImageAxes(pt[0], pt[1], ps, conv.laserAxis, img);
    if (!(img[2] >= gLo && img[2] <= gHi)) {
      tally.gated++;
      continue;
    }
    const iu = Math.floor((img[0] + half) * inv);
    const iv = Math.floor((img[1] + half) * inv);
    if (iu < 0 || iu >= grid.n || iv < 0 || iv >= grid.n) {
      tally.outsideGrid++;
      continue;
    }
    hist[iv * grid.n + iu] = (hist[iv * grid.n + iu] as number) + 1;
    tally.kept++;
  }
  return tally;
}
