/**
 * The analysis chain downstream of binning, applied to one polar histogram: radial window (fixed or automatic),
 * angular distribution in the angular gate (the automatic window widened to ≈ ±2σ of the ring), circular smoothing,
 * lobe candidates, the joint Poisson fit of all lobes (lobe-fit.ts; single-lobe fits as fallback), and the
 * radius of each lobe (peak of the momentum-area density along its direction). The same function runs on the
 * measured histogram and on every Poisson-bootstrap replicate, so the bootstrap repeats the whole chain.
 *
 * Radius rule (FORMATS §4): density D(p) = counts/(p Δp Δθ) in a sector of ±`radiusSectorHalfWidthDeg` (default
 * 10°, at most 90°/N) around the fitted lobe direction; the peak of D is searched from the second ring up to the
 * radial window extended by its own width on each side, and refined by a Gaussian + constant fit.
 */
import type { PolarGrid } from './grids';
import { fitLobesJointly } from './lobe-fit';
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
  /** Fixed half-window (deg), or `follow` (±3σ of each fitted lobe, clipped at its neighbours; lobe-fit.ts). */
  fitHalfWidthDeg: number | 'follow';
  /** Starting widths of the joint fit (the measured widths, for bootstrap replicates), or null. */
  startWidthsDeg?: readonly number[] | null;
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
  /** Angular fit window of this lobe [lo, hi], degrees (null for the single-lobe fallback fits). */
  windowDeg: [number, number] | null;
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
  /** Radial gate of the angular distribution [gLo, gHi], a.u. (auto: the window widened to ≈ ±2σ of the ring). */
  gLo: number;
  gHi: number;
  windowResolved: boolean;
  countsInWindow: number;
  totalCounts: number;
  lobes: ChainLobe[];
  /** Why the joint Poisson fit was refused (the lobes then come from the single-lobe fits), null when it held. */
  jointFitFailure: string | null;
}

/** Half-maximum points of a Gaussian ring lie at ±1.1774σ; widening by 1.7 reaches ±2.0σ (95 % of the ring). */
export const ANGULAR_GATE_WIDENING = 1.7;

/**
 * Radial gate of the angular distribution: a fixed window as given; the automatic window widened about the peak
 * of dN/dp by {@link ANGULAR_GATE_WIDENING} on each side (at least the first ring, at most the grid).
 */
export function angularGate(pLo: number, pHi: number, pPeak: number | null, cfg: ChainConfig): [number, number] {
  if (cfg.window !== 'auto' || pPeak === null) return [pLo, pHi];
  const lo = Math.max(0, pPeak - ANGULAR_GATE_WIDENING * (pPeak - pLo));
  const hi = Math.min(cfg.polar.pMaxAu, pPeak + ANGULAR_GATE_WIDENING * (pHi - pPeak));
  return [Math.min(lo, pLo), Math.max(hi, pHi)];
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
  let pPeak: number | null = null;
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
        gLo: 0,
        gHi: g.pMaxAu,
        windowResolved: false,
        countsInWindow: 0,
        totalCounts: total,
        lobes: [],
        jointFitFailure: null,
      };
    }
    pLo = w.pLo;
    pHi = w.pHi;
    pPeak = w.pPeak;
    resolved = w.resolved;
  } else {
    pLo = cfg.window[0];
    pHi = Math.min(cfg.window[1], g.pMaxAu);
  }
  const [gLo, gHi] = angularGate(pLo, pHi, pPeak, cfg);
  radialWindowWeights(g, gLo, gHi, ws.winW);
  const iLo = Math.max(0, Math.floor(gLo / g.dpAu));
  const iHi = Math.min(R, Math.ceil(gHi / g.dpAu));
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
      gLo,
      gHi,
      windowResolved: resolved,
      countsInWindow: inWindow,
      totalCounts: total,
      lobes: [],
      jointFitFailure: null,
    };
  }
  const candidates = findLobeCandidates(g.thetaCentresDeg, ws.smoothed, cfg.nLobes, seedsDeg);
  const sectorHalf = cfg.radiusSectorHalfWidthDeg ?? Math.min(10, 90 / cfg.nLobes);
  const width = pHi - pLo;
  const rLo = Math.max(1, Math.floor((pLo - width) / g.dpAu));
  const rHi = Math.min(R, Math.ceil((pHi + width) / g.dpAu));
  const lobes: ChainLobe[] = [];
  // joint Poisson ML of all lobes (gaussian / von_mises); the single-lobe fits remain for `parabola` and as fallback
  let jointFitFailure: string | null = null;
  type AngleFit = {
    angleDeg: number;
    widthDeg: number | null;
    method: PeakModel | 'parabola_fallback';
    nearEdge: boolean;
    fitSigmaDeg: number | null;
    windowDeg: [number, number] | null;
  };
  let fits: AngleFit[] | null = null;
  if (cfg.peakModel !== 'parabola' && candidates.length > 0) {
    const j = fitLobesJointly(g.thetaCentresDeg, ws.angular, ws.smoothed, candidates, {
      shape: cfg.peakModel,
      window: cfg.fitHalfWidthDeg,
      startWidthsDeg: cfg.startWidthsDeg ?? null,
    });
    if (j.ok) {
      fits = j.lobes.map((l) => ({
        angleDeg: l.angleDeg,
        widthDeg: l.widthDeg,
        method: cfg.peakModel,
        nearEdge: l.nearEdge,
        fitSigmaDeg: l.angleSigmaDeg,
        windowDeg: l.windowDeg,
      }));
    } else {
      jointFitFailure = j.reason;
    }
  }
  if (!fits) {
    const hw = cfg.fitHalfWidthDeg === 'follow' ? 45 : cfg.fitHalfWidthDeg;
    fits = candidates.map((c) => ({
      ...fitAngularPeak(g.thetaCentresDeg, ws.angular, ws.smoothed, c, cfg.peakModel, hw, ws.peak),
      windowDeg: null,
    }));
  }
  candidates.forEach((c, k) => {
    const f = fits[k]!;
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
      windowDeg: f.windowDeg,
      radiusAu: r ? r.radiusAu : null,
      radiusFellBack: r ? r.method === 'parabola_fallback' : true,
      radiusNearEdge: r ? r.nearEdge : false,
    });
  });
  return {
    ok: true,
    reason: null,
    pLo,
    pHi,
    gLo,
    gHi,
    windowResolved: resolved,
    countsInWindow: inWindow,
    totalCounts: total,
    lobes,
    jointFitFailure,
  };
}
