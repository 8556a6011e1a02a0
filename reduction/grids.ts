/**
 * The momentum grids of the analysis settings (FORMATS §3).
 *
 * - Cartesian grid: `n` × `n` cells whose centres are linspace(−p_max, p_max, n) on each axis (so the default
 *   n = 401, p_max = 2 a.u. gives 0.01 a.u. cells with a cell centred on p = 0); cell width Δ = 2 p_max/(n − 1);
 *   px along x (columns), py along y (rows); images are [py][px] row-major.
 * - Polar grid: `radial_bins` rings of width Δp = p_max/radial_bins over [0, p_max) and `angular_bins` sectors of
 *   width Δθ = 360°/angular_bins starting at −180° (sector j covers [−180° + jΔθ, −180° + (j+1)Δθ)); histograms are
 *   [p][θ] row-major (radial index major).
 */
import type { AnalysisSettings } from './formats';

// TYPES //

export interface CartesianGrid {
  n: number;
  pMaxAu: number;
  /** Cell width, a.u. */
  stepAu: number;
  /** Cell centres, a.u. (length n). */
  centresAu: Float64Array;
}

export interface PolarGrid {
  radialBins: number;
  angularBins: number;
  pMaxAu: number;
  /** Ring width, a.u. */
  dpAu: number;
  /** Sector width, degrees. */
  dthetaDeg: number;
  /** Ring centres (i + ½)Δp, a.u. */
  pCentresAu: Float64Array;
  /** Sector centres −180° + (j + ½)Δθ, degrees. */
  thetaCentresDeg: Float64Array;
}

// FUNCTIONS //

/**
 * Cartesian grid of the settings.
 *
 * @param settings - analysis settings
 * @returns the grid
 * @example
 * cartesianGrid(settings).stepAu; // returns 0.01 for the defaults
 */
export function cartesianGrid(settings: Pick<AnalysisSettings, 'grid'>): CartesianGrid {
  const n = settings.grid.n;
  const pMaxAu = settings.grid.p_max_au;
  const stepAu = (2 * pMaxAu) / (n - 1);
  const centresAu = new Float64Array(n);
  for (let i = 0; i < n; i++) centresAu[i] = -pMaxAu + i * stepAu;
  if (n % 2 === 1) centresAu[(n - 1) / 2] = 0; // exact zero at the centre cell
  return { n, pMaxAu, stepAu, centresAu };
}

/**
 * Polar grid of the settings (radius up to `grid.p_max_au`).
 *
 * @param settings - analysis settings
 * @returns the grid
 */
export function polarGrid(settings: Pick<AnalysisSettings, 'grid' | 'radial_bins' | 'angular_bins'>): PolarGrid {
  const radialBins = settings.radial_bins;
  const angularBins = settings.angular_bins;
  const pMaxAu = settings.grid.p_max_au;
  const dpAu = pMaxAu / radialBins;
  const dthetaDeg = 360 / angularBins;
  const pCentresAu = new Float64Array(radialBins);
  for (let i = 0; i < radialBins; i++) pCentresAu[i] = (i + 0.5) * dpAu;
  const thetaCentresDeg = new Float64Array(angularBins);
  for (let j = 0; j < angularBins; j++) thetaCentresDeg[j] = -180 + (j + 0.5) * dthetaDeg;
  return { radialBins, angularBins, pMaxAu, dpAu, dthetaDeg, pCentresAu, thetaCentresDeg };
}
