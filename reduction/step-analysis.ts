/**
 * The analysis chain downstream of binning, applied to one polar histogram: radial window (fixed or automatic),
 * angular distribution in the window, circular smoothing, lobe candidates, sub-bin peak fit of each lobe, and the
 * radius of each lobe (peak of the momentum-area density along its direction). The same function runs on the
 * measured histogram and on every Poisson-bootstrap replicate, so the bootstrap repeats the whole chain.
 *
 * Radius rule (FORMATS §4): density D(p) = counts/(p Δp Δθ) in a sector of ±`radiusSectorHalfWidthDeg` (default
 * 10°, at most 90°/N) around the fitted lobe direction; the peak of D is searched from the second ring up to the
 * radial window extended by its own width on each side, and refined by a Gaussian + constant fit.
 */
import type { PolarGrid } from './grids';
import { findLobeCandidates } from './lobes';
import { fitAngularPeak, fitRadialPeak, PeakFitWorkspace, type PeakModel } from './peak-fit';
import { circularConvolveKernel, gaussianKernel } from './smoothing';
import {
  angularDistributionKernel,
  autoRadialWindow,
  radialCountsKernel,
  radialWindowWeights,
  sectorDensityKernel,
} from './spectra';

// TYPES //

export interface ChainConfig {
  polar: PolarGrid;
  nLobes: number;
  /** Fixed window [p_min, p_max] (a.u.) or `auto`. */
  window: readonly [number, number] | 'auto';
  /** Gaussian σ of the angular smoothing, degrees. */
  smoothingDeg: number;
  peakModel: PeakModel;
  fitHalfWidthDeg: number;
  /** Sector half-width for the radius, degrees (default min(10, 90/N)). */
  radiusSectorHalfWidthDeg?: number;
}

export interface ChainLobe {
  candidateDeg: number;
  angleDeg: number;
  widthDeg: number | null;
  method: PeakModel | 'parabola_fallback';
  angleNearEdge: boolean;
  fitSigmaDeg: number | null;
  radiusAu: number | null;
  radiusFellBack: boolean;
  radiusNearEdge: boolean;
}

export interface ChainResult {
  /** False when the histogram holds no usable signal (reason says why). */
  ok: boolean;
  reason: string | null;
  pLo: number;
  pHi: number;
  windowResolved: boolean;
  countsInWindow: number;
  totalCounts: number;
  lobes: ChainLobe[];
}

// FUNCTIONS //

/** Scratch arrays of the chain, sized for one polar grid. */
export class ChainWorkspace {
  radial: Float64Array;
  dNdp: Float64Array;
  scratch: Float64Array;
  winW: Float64Array;
  angular: Float64Array;
  smoothed: Float64Array;
  density: Float64Array;
  sectorCounts: Float64Array;
  area: Float64Array;
  kernel: Float64Array;
  peak: PeakFitWorkspace;
  constructor(cfg: ChainConfig) {
    const R = cfg.polar.radialBins;
    const M = cfg.polar.angularBins;
    this.radial = new Float64Array(R);
    this.dNdp = new Float64Array(R);
    this.scratch = new Float64Array(R);
    this.winW = new Float64Array(R);
    this.angular = new Float64Array(M);
    this.smoothed = new Float64Array(M);
    this.density = new Float64Array(R);
    this.sectorCounts = new Float64Array(R);
    this.area = new Float64Array(R);
    this.kernel = gaussianKernel(cfg.smoothingDeg, cfg.polar.dthetaDeg);
    this.peak = new PeakFitWorkspace(Math.max(R, M));
  }
}

/**
 * Runs the chain on one polar histogram.
 *
 * @param H - polar histogram [p][θ] (counts)
 * @param cfg - chain settings
 * @param seedsDeg - lobe seeds (simple-man directions or the original lobes), or null
 * @param ws - workspace (its `angular`, `smoothed` and `dNdp` hold this run's arrays afterwards)
 * @returns window, lobes and radii
 */
export function analysePolarHistogram(
  H: ArrayLike<number>,
  cfg: ChainConfig,
  seedsDeg: readonly number[] | null,
  ws: ChainWorkspace,
): ChainResult {
  const g = cfg.polar;
  const R = g.radialBins;
  const M = g.angularBins;
  radialCountsKernel(R, M, H, ws.radial);
  let total = 0;
  for (let i = 0; i < R; i++) {
    total += ws.radial[i]!;
    ws.dNdp[i] = ws.radial[i]! / g.dpAu;
  }
  let pLo: number;
  let pHi: number;
  let resolved = true;
  if (cfg.window === 'auto') {
    const w = autoRadialWindow(g, ws.dNdp, ws.scratch);
    if (!w) {
      ws.angular.fill(0);
      ws.smoothed.fill(0);
      return {
        ok: false,
        reason: 'no positive counts inside the polar grid',
        pLo: 0,
        pHi: g.pMaxAu,
        windowResolved: false,
        countsInWindow: 0,
        totalCounts: total,
        lobes: [],
      };
    }
    pLo = w.pLo;
    pHi = w.pHi;
    resolved = w.resolved;
  } else {
    pLo = cfg.window[0];
    pHi = Math.min(cfg.window[1], g.pMaxAu);
  }
  radialWindowWeights(g, pLo, pHi, ws.winW);
  const iLo = Math.max(0, Math.floor(pLo / g.dpAu));
  const iHi = Math.min(R, Math.ceil(pHi / g.dpAu));
  angularDistributionKernel(M, H, ws.winW, iLo, iHi, ws.angular);
  let inWindow = 0;
  for (let j = 0; j < M; j++) inWindow += ws.angular[j]!;
  circularConvolveKernel(M, ws.angular, ws.kernel, ws.smoothed);
  if (!(inWindow > 0)) {
    return {
      ok: false,
      reason: 'no positive counts inside the radial window',
      pLo,
      pHi,
      windowResolved: resolved,
      countsInWindow: inWindow,
      totalCounts: total,
      lobes: [],
    };
  }
  const candidates = findLobeCandidates(g.thetaCentresDeg, ws.smoothed, cfg.nLobes, seedsDeg);
  const sectorHalf = cfg.radiusSectorHalfWidthDeg ?? Math.min(10, 90 / cfg.nLobes);
  const width = pHi - pLo;
  const rLo = Math.max(1, Math.floor((pLo - width) / g.dpAu));
  const rHi = Math.min(R, Math.ceil((pHi + width) / g.dpAu));
  const lobes: ChainLobe[] = [];
  for (const c of candidates) {
    const f = fitAngularPeak(
      g.thetaCentresDeg,
      ws.angular,
      ws.smoothed,
      c,
      cfg.peakModel,
      cfg.fitHalfWidthDeg,
      ws.peak,
    );
    const nSec = sectorDensityKernel(g, H, f.angleDeg, sectorHalf, ws.density, ws.sectorCounts);
    const dth = (nSec * g.dthetaDeg * Math.PI) / 180;
    for (let i = 0; i < R; i++) ws.area[i] = g.pCentresAu[i]! * g.dpAu * dth;
    const r = fitRadialPeak(g.pCentresAu, ws.density, ws.sectorCounts, ws.area, rLo, rHi, ws.peak);
    lobes.push({
      candidateDeg: c,
      angleDeg: f.angleDeg,
      widthDeg: f.widthDeg,
      method: f.method,
      angleNearEdge: f.nearEdge,
      fitSigmaDeg: f.fitSigmaDeg,
      radiusAu: r ? r.radiusAu : null,
      radiusFellBack: r ? r.method === 'parabola_fallback' : true,
      radiusNearEdge: r ? r.nearEdge : false,
    });
  }
  return {
    ok: true,
    reason: null,
    pLo,
    pHi,
    windowResolved: resolved,
    countsInWindow: inWindow,
    totalCounts: total,
    lobes,
  };
}
