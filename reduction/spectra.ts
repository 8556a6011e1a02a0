/**
 * Spectra from a polar histogram H[i][j] (counts in ring i, sector j; see grids.ts): radial dN/dp, energy dN/dE,
 * the 2-D momentum-area density along a direction, the angular distribution in a radial window, and the automatic
 * radial window.
 *
 * Jacobians (SCIENCE.md §7.8): ring-sector area = p_i Δp Δθ (exact for the centre radius p_i = (i + ½)Δp);
 * area density = counts/(p Δp Δθ) (counts per a.u.²); dN/dp = Σ_j H[i][j]/Δp (counts per a.u.); dN/dE = (dN/dp)/p
 * (counts per hartree, E = p²/2).
 *
 * Auto window rule (Lobeline's choice): the peak of dN/dp (after a 3-bin running mean) and the two points where
 * dN/dp falls to half of that peak, linearly interpolated, on either side; the window is [p_lo, p_hi], at least
 * three rings wide; where the half level is not reached the window stops at the grid edge and `resolved` is false.
 */
import type { PolarGrid } from './grids';

// FUNCTIONS //

/**
 * Kernel: radial counts R[i] = Σ_j H[i][j] (counts per ring).
 *
 * @param R - rings
 * @param M - sectors
 * @param H - histogram [R][M]
 * @param out - length R
 * @returns out
 */
export function radialCountsKernel(R: number, M: number, H: ArrayLike<number>, out: Float64Array): Float64Array {
  for (let i = 0; i < R; i++) {
    let s = 0;
    const o = i * M;
    for (let j = 0; j < M; j++) s += H[o + j]!;
    out[i] = s;
  }
  return out;
}

/**
 * Radial spectrum dN/dp (counts per a.u. of momentum) summed over all angles.
 *
 * @param grid - polar grid
 * @param H - polar histogram
 * @param out - length radialBins (default new)
 * @returns dN/dp at the ring centres
 */
export function radialSpectrum(
  grid: PolarGrid,
  H: ArrayLike<number>,
  out: Float64Array = new Float64Array(grid.radialBins),
): Float64Array {
  radialCountsKernel(grid.radialBins, grid.angularBins, H, out);
  const inv = 1 / grid.dpAu;
  for (let i = 0; i < grid.radialBins; i++) out[i] = out[i]! * inv;
  return out;
}

/**
 * Energy spectrum dN/dE = (dN/dp)/p at the ring centres (counts per hartree; multiply by 1/27.211386 for per eV).
 *
 * @param grid - polar grid
 * @param dNdp - radial spectrum
 * @param out - output (default new)
 * @returns dN/dE; the energies are p_i²/2
 */
export function energySpectrum(
  grid: PolarGrid,
  dNdp: ArrayLike<number>,
  out: Float64Array = new Float64Array(grid.radialBins),
): Float64Array {
  for (let i = 0; i < grid.radialBins; i++) out[i] = dNdp[i]! / grid.pCentresAu[i]!;
  return out;
}

/**
 * Weights w_i ∈ [0, 1] = fraction of ring i inside the window [pLo, pHi] (so the angular distribution varies
 * continuously with the window).
 *
 * @param grid - polar grid
 * @param pLo - window start, a.u.
 * @param pHi - window end, a.u.
 * @param out - length radialBins
 * @returns out
 */
export function radialWindowWeights(
  grid: PolarGrid,
  pLo: number,
  pHi: number,
  out: Float64Array = new Float64Array(grid.radialBins),
): Float64Array {
  const dp = grid.dpAu;
  for (let i = 0; i < grid.radialBins; i++) {
    const a = Math.max(pLo, i * dp);
    const b = Math.min(pHi, (i + 1) * dp);
    out[i] = b > a ? (b - a) / dp : 0;
  }
  return out;
}

/**
 * Kernel: angular distribution A[j] = Σ_i w_i H[i][j] (counts per sector within the weighted radial window),
 * over the rings iLo … iHi − 1 only.
 *
 * @param M - sectors
 * @param H - histogram [R][M]
 * @param w - ring weights
 * @param iLo - first ring
 * @param iHi - one past the last ring
 * @param out - length M (overwritten)
 * @returns out
 */
export function angularDistributionKernel(
  M: number,
  H: ArrayLike<number>,
  w: ArrayLike<number>,
  iLo: number,
  iHi: number,
  out: Float64Array,
): Float64Array {
  out.fill(0);
  for (let i = iLo; i < iHi; i++) {
    const wi = w[i]!;
    if (wi === 0) continue;
    const o = i * M;
    for (let j = 0; j < M; j++) out[j]! += wi * H[o + j]!;
  }
  return out;
}

/**
 * Angular distribution of counts in the radial window [pLo, pHi] (counts per sector of Δθ degrees).
 *
 * @param grid - polar grid
 * @param H - polar histogram
 * @param pLo - window start, a.u.
 * @param pHi - window end, a.u.
 * @param out - length angularBins
 * @returns out
 * @throws {RangeError} when pHi ≤ pLo
 */
export function angularDistribution(
  grid: PolarGrid,
  H: ArrayLike<number>,
  pLo: number,
  pHi: number,
  out: Float64Array = new Float64Array(grid.angularBins),
): Float64Array {
  if (!(pHi > pLo)) throw new RangeError(`radial window must have p_max > p_min, got [${pLo}, ${pHi}]`);
  const w = radialWindowWeights(grid, pLo, pHi);
  const iLo = Math.max(0, Math.floor(pLo / grid.dpAu));
  const iHi = Math.min(grid.radialBins, Math.ceil(pHi / grid.dpAu));
  return angularDistributionKernel(grid.angularBins, H, w, iLo, iHi, out);
}

/** Result of the automatic window. */
export interface AutoWindow {
  pLo: number;
  pHi: number;
  pPeak: number;
  /** False when the half level was not reached on one side (window stops at the grid edge). */
  resolved: boolean;
}

/**
 * Automatic radial window (rule in the module doc): the half-maximum points of dN/dp around its peak.
 *
 * @param grid - polar grid
 * @param dNdp - radial spectrum (counts per a.u.), length radialBins
 * @param scratch - optional scratch of length radialBins
 * @returns the window, or null when dN/dp has no positive peak
 */
export function autoRadialWindow(
  grid: PolarGrid,
  dNdp: ArrayLike<number>,
  scratch: Float64Array = new Float64Array(grid.radialBins),
): AutoWindow | null {
  const R = grid.radialBins;
  const dp = grid.dpAu;
  for (let i = 0; i < R; i++) {
    const a = dNdp[Math.max(0, i - 1)]!;
    const b = dNdp[i]!;
    const c = dNdp[Math.min(R - 1, i + 1)]!;
    scratch[i] = (a + b + c) / 3;
  }
  let iMax = 0;
  for (let i = 1; i < R; i++) if (scratch[i]! > scratch[iMax]!) iMax = i;
  const peak = scratch[iMax]!;
  if (!(peak > 0)) return null;
  const half = peak / 2;
  let resolved = true;
  // low side
  let pLo = 0;
  let i = iMax;
  while (i > 0 && scratch[i - 1]! > half) i--;
  if (i === 0) {
    resolved = scratch[0]! <= half;
    pLo = 0;
  } else {
    // crossing between ring i−1 (≤ half) and ring i (> half)
    const y0 = scratch[i - 1]!;
    const y1 = scratch[i]!;
    const t = y1 === y0 ? 0.5 : (half - y0) / (y1 - y0);
    pLo = (i - 1 + 0.5 + t) * dp;
  }
  let pHi = grid.pMaxAu;
  let k = iMax;
  while (k < R - 1 && scratch[k + 1]! > half) k++;
  if (k === R - 1) {
    resolved = false;
    pHi = grid.pMaxAu;
  } else {
    const y0 = scratch[k]!;
    const y1 = scratch[k + 1]!;
    const t = y0 === y1 ? 0.5 : (y0 - half) / (y0 - y1);
    pHi = (k + 0.5 + t) * dp;
  }
  // at least three rings wide
  const minWidth = 3 * dp;
  if (pHi - pLo < minWidth) {
    const mid = (pLo + pHi) / 2;
    pLo = Math.max(0, mid - minWidth / 2);
    pHi = Math.min(grid.pMaxAu, pLo + minWidth);
  }
  return { pLo, pHi, pPeak: (iMax + 0.5) * dp, resolved };
}

/**
 * Kernel: momentum-area density along a direction, D[i] = Σ_{j ∈ sector} H[i][j] / (p_i Δp Δθ_sector) (counts per
 * a.u.²), over the sectors whose centres lie within ±halfWidthDeg of `angleDeg` (wrap-around safe), and the raw
 * counts per ring in that sector (for Poisson weights).
 *
 * @param grid - polar grid
 * @param H - polar histogram
 * @param angleDeg - direction, degrees
 * @param halfWidthDeg - sector half-width, degrees (at least half a sector is always used)
 * @param density - output density, length radialBins
 * @param counts - output counts, length radialBins
 * @returns the number of sectors used
 */
export function sectorDensityKernel(
  grid: PolarGrid,
  H: ArrayLike<number>,
  angleDeg: number,
  halfWidthDeg: number,
  density: Float64Array,
  counts: Float64Array,
): number {
  const M = grid.angularBins;
  const dth = grid.dthetaDeg;
  // sector containing angleDeg, then ±k sectors
  const jc = Math.floor(((((angleDeg + 180) % 360) + 360) % 360) / dth) % M;
  const k = Math.max(0, Math.round(halfWidthDeg / dth - 0.5));
  const nSec = Math.min(M, 2 * k + 1);
  counts.fill(0);
  for (let i = 0; i < grid.radialBins; i++) {
    const o = i * M;
    let s = 0;
    for (let d = -k; d < -k + nSec; d++) {
      let j = jc + d;
      j = ((j % M) + M) % M;
      s += H[o + j]!;
    }
    counts[i] = s;
    density[i] = s / (grid.pCentresAu[i]! * grid.dpAu * ((nSec * dth * Math.PI) / 180));
  }
  return nSec;
}
