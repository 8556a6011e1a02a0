/**
 * The Poisson bootstrap of one step: B replicates of the polar histogram (bootstrap.ts), each run through the same
 * analysis chain (step-analysis.ts) with the same lobe seeds, giving the spread of every lobe angle, every lobe
 * radius, the mean radius and any weighted mean of the lobe offsets.
 *
 * Seeding: replicate b of step `index` draws from xoshiro128** seeded with seed ⊕ (index · 0x9E3779B1), so steps are
 * independent and the whole scan is reproducible from `bootstrap.seed`.
 *
 * Speed (exact in distribution): the chain reads the histogram only through (a) ring totals (automatic window),
 * (b) every bin of the rings in the radial window, (c) the bins of a narrow sector around each lobe in the radius
 * search range. So each replicate draws per bin only there (window ± a margin, lobe sectors ± 5°), one Poisson of
 * the remaining sum for the rest of each partly used ring, and one Poisson of the ring total for the other rings — a
 * sum of independent Poisson variables being Poisson of the summed mean. A replicate whose window, search range or
 * lobe directions stray outside that region is redrawn in full (`redrawn` counts them).
 */
import { wrapDeg } from './angles';
import { replicateStd } from './bootstrap';
import { createPoissonTable, createPrng, type PoissonTable, samplePoissonTable } from './prng';
import { analysePolarHistogram, type ChainConfig, type ChainResult, type ChainWorkspace } from './step-analysis';

// TYPES //

export interface BootstrapStats {
  B: number;
  nLobes: number;
  /** Replicate lobe angles [B][nLobes], degrees (NaN = failed). */
  angles: Float64Array;
  /** Replicate lobe radii [B][nLobes], a.u. (NaN = none). */
  radii: Float64Array;
  angleStd: number[];
  radiusStd: number[];
  /** Spread of the replicate mean radius over lobes. */
  meanRadiusStd: number;
  /** Replicates in which the chain failed or lost a lobe. */
  failed: number;
  /** Replicates redrawn in full because they left the precomputed region. */
  redrawn: number;
  /** Spread of Σ w_i s·wrap(angle_i − expected_i) over the replicates. */
  weightedOffsetStd(weights: number[], expected: number[], sense: 1 | -1, reference: number[]): number;
}

// FUNCTIONS //

interface SamplingPlan {
  table: PoissonTable;
  dest: Int32Array;
  /** Rings drawn bin by bin (all bins) [fLo, fHi). */
  fLo: number;
  fHi: number;
  /** Rings with per-bin lobe sectors [sLo, sHi). */
  sLo: number;
  sHi: number;
  angleMarginDeg: number;
}

function ringRange(pLo: number, pHi: number, dp: number, R: number, minRing: number): [number, number] {
  return [Math.max(minRing, Math.floor(pLo / dp)), Math.min(R, Math.ceil(pHi / dp))];
}

/** Builds the reduced sampling plan from the measured result (null: draw everything). */
function buildPlan(H: Float64Array, cfg: ChainConfig, measured: ChainResult, sectorHalf: number): SamplingPlan | null {
  const g = cfg.polar;
  const R = g.radialBins;
  const M = g.angularBins;
  const dp = g.dpAu;
  const w = measured.pHi - measured.pLo;
  const m = cfg.window === 'auto' ? Math.max(0.25 * w, 3 * dp) : dp;
  // the angular gate is wider than the window (auto mode): margin on the gate, scaled by the widening
  const gm = cfg.window === 'auto' ? Math.max(0.25 * (measured.gHi - measured.gLo), 3 * dp) : dp;
  const [fLo, fHi] = ringRange(
    Math.min(measured.pLo - m, measured.gLo - gm),
    Math.max(measured.pHi + m, measured.gHi + gm),
    dp,
    R,
    0,
  );
  const [sLo, sHi] = ringRange(measured.pLo - w - 3 * m, measured.pHi + w + 3 * m, dp, R, 1);
  const angleMarginDeg = 5;
  const inSector = new Uint8Array(M);
  for (let j = 0; j < M; j++) {
    for (const l of measured.lobes) {
      if (Math.abs(wrapDeg(g.thetaCentresDeg[j]! - l.angleDeg)) <= sectorHalf + angleMarginDeg + g.dthetaDeg)
        inSector[j] = 1;
    }
  }
  const means: number[] = [];
  const dest: number[] = [];
  for (let i = 0; i < R; i++) {
    const o = i * M;
    if (i >= fLo && i < fHi) {
      for (let j = 0; j < M; j++) {
        if (H[o + j] !== 0) {
          means.push(H[o + j]!);
          dest.push(o + j);
        }
      }
    } else if (i >= sLo && i < sHi) {
      let rest = 0;
      let restAt = -1;
      for (let j = 0; j < M; j++) {
        if (inSector[j]) {
          if (H[o + j] !== 0) {
            means.push(H[o + j]!);
            dest.push(o + j);
          }
        } else {
          rest += H[o + j]!;
          if (restAt < 0) restAt = o + j;
        }
      }
      if (restAt >= 0 && rest !== 0) {
        means.push(rest);
        dest.push(restAt);
      }
    } else {
      let tot = 0;
      for (let j = 0; j < M; j++) tot += H[o + j]!;
      if (tot !== 0) {
        means.push(tot);
        dest.push(o);
      }
    }
  }
  if (means.length > 0.8 * H.length) return null;
  return { table: createPoissonTable(means), dest: Int32Array.from(dest), fLo, fHi, sLo, sHi, angleMarginDeg };
}

/** Whether a replicate's chain only read what the plan drew. */
function withinPlan(plan: SamplingPlan, cfg: ChainConfig, r: ChainResult, measured: ChainResult): boolean {
  const g = cfg.polar;
  const dp = g.dpAu;
  const R = g.radialBins;
  const [iLo, iHi] = ringRange(Math.min(r.pLo, r.gLo), Math.max(r.pHi, r.gHi), dp, R, 0);
  if (iLo < plan.fLo || iHi > plan.fHi) return false;
  const w = r.pHi - r.pLo;
  const [rLo, rHi] = ringRange(r.pLo - w, r.pHi + w, dp, R, 1);
  if (rLo < Math.min(plan.sLo, plan.fLo) || rHi > Math.max(plan.sHi, plan.fHi)) return false;
  for (let i = 0; i < r.lobes.length; i++) {
    const a = r.lobes[i]!.angleDeg;
    const b = measured.lobes[i]?.angleDeg ?? a;
    if (Math.abs(wrapDeg(a - b)) > plan.angleMarginDeg) return false;
  }
  return true;
}

/**
 * Runs the bootstrap of one step.
 *
 * @param H - measured polar histogram (counts)
 * @param cfg - chain settings
 * @param seeds - lobe seeds (one per lobe of the measured result)
 * @param measured - the chain result of the measured histogram
 * @param ws - workspace (overwritten)
 * @param B - replicates (≥ 1)
 * @param seed - `bootstrap.seed`
 * @param index - step index (mixed into the seed)
 * @returns replicate statistics
 */
export function runPolarBootstrap(
  H: Float64Array,
  cfg: ChainConfig,
  seeds: readonly number[],
  measured: ChainResult,
  ws: ChainWorkspace,
  B: number,
  seed: number,
  index: number,
): BootstrapStats {
  const nL = seeds.length;
  // warm start of the joint fit from the measured widths (the window and the fit are still redone per replicate)
  const widths = measured.lobes.map((l) => l.widthDeg);
  cfg = { ...cfg, startWidthsDeg: widths.every((w) => w !== null && w > 0) ? (widths as number[]) : null };
  const rng = createPrng((seed ^ Math.imul(index, 0x9e3779b1)) | 0);
  const rep = new Float64Array(H.length);
  const angles = new Float64Array(B * nL).fill(Number.NaN);
  const radii = new Float64Array(B * nL).fill(Number.NaN);
  const meanR = new Float64Array(B).fill(Number.NaN);
  const sectorHalf = cfg.radiusSectorHalfWidthDeg ?? Math.min(10, 90 / cfg.nLobes);
  const plan = measured.ok ? buildPlan(H, cfg, measured, sectorHalf) : null;
  let fullTable: PoissonTable | null = null;
  const full = (): PoissonTable => {
    fullTable ??= createPoissonTable(H);
    return fullTable;
  };
  let failed = 0;
  let redrawn = 0;
  for (let b = 0; b < B; b++) {
    let r: ChainResult;
    if (plan) {
      samplePoissonTable(plan.table, rng, rep, plan.dest);
      r = analysePolarHistogram(rep, cfg, seeds, ws);
      if (r.ok && !withinPlan(plan, cfg, r, measured)) {
        redrawn++;
        samplePoissonTable(full(), rng, rep, null);
        r = analysePolarHistogram(rep, cfg, seeds, ws);
        rep.fill(0); // the plan writes only its own bins
      }
    } else {
      samplePoissonTable(full(), rng, rep, null);
      r = analysePolarHistogram(rep, cfg, seeds, ws);
    }
    if (!r.ok || r.lobes.length !== nL) {
      failed++;
      continue;
    }
    let sr = 0;
    let nr = 0;
    for (let i = 0; i < nL; i++) {
      const l = r.lobes[i]!;
      angles[b * nL + i] = l.angleDeg;
      if (l.radiusAu !== null) {
        radii[b * nL + i] = l.radiusAu;
        sr += l.radiusAu;
        nr++;
      }
    }
    if (nr === nL) meanR[b] = sr / nr;
  }
  const angleStd: number[] = [];
  const radiusStd: number[] = [];
  for (let i = 0; i < nL; i++) {
    angleStd.push(replicateStd(angles, B, nL, i, seeds[i]!, 360).std);
    radiusStd.push(replicateStd(radii, B, nL, i, 0, null).std);
  }
  return {
    B,
    nLobes: nL,
    angles,
    radii,
    angleStd,
    radiusStd,
    meanRadiusStd: replicateStd(meanR, B, 1, 0, 0, null).std,
    failed,
    redrawn,
    weightedOffsetStd(weights, expected, sense, reference) {
      const v = new Float64Array(B).fill(Number.NaN);
      for (let b = 0; b < B; b++) {
        let s = 0;
        let ok = true;
        for (let i = 0; i < nL && i < weights.length; i++) {
          const a = angles[b * nL + i]!;
          if (!Number.isFinite(a)) {
            ok = false;
            break;
          }
          // offset continued around the measured one (no jump at ±180°)
          s += weights[i]! * sense * (wrapDeg(reference[i]! - expected[i]!) + wrapDeg(a - reference[i]!));
        }
        if (ok) v[b] = s;
      }
      return replicateStd(v, B, 1, 0, 0, null).std;
    },
  };
}
