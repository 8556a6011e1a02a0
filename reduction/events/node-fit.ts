/**
 * Magnetic field and t₀ from the cyclotron-node spacing (SCIENCE.md §7.7, calibration workflow [common practice]:
 * "B (and t₀) from the node spacing in the R-vs-t plot").
 *
 * In a homogeneous B along ŝ every electron's distance from the p⊥ = 0 impact point is
 * R = (2 p⊥ / |Ω|) |sin(Ω t / 2)| (§7.7, m = 1), so R² ∝ sin²(π t / T) with T = 2π/|Ω|: in the plot of the mean R²
 * against the measured flight time t_meas = t₀ + t, the mean vanishes at the nodes t_meas = t₀ + n T (n ≥ 1) whatever
 * the momentum distribution, and near a node it is a parabola in t. Method (ours):
 *
 * 1. stream the events into time bins: count and Σ R² per bin (bounded memory, any chunking);
 * 2. node candidates: bins where the 3-bin running mean of ⟨R²⟩ is the lowest within ±5 % of the window and below
 *    `depth` times the highest there (candidates closer than 0.3 of the largest gap merged, the deeper kept);
 * 3. each node refined by a count-weighted least-squares cubic through ⟨R²⟩ within ±8 % of a period (its local
 *    minimum; see refineVertex for why not a parabola);
 * 4. t_n = t₀ + n T over the node numbers by weighted least squares (each node’s σ from its cubic fit) → T,
 *    its standard error (scaled up when the scatter exceeds the σ's), |B| = (2π/T) in a.u. of B (the sign needs the
 *    rotation sense, not the spacing);
 * 5. t₀ = c − n₁ T with the node number n₁ of the first node fixed by a rough t₀ (e.g. the file's), which must lie
 *    within T/2 of the truth.
 */
import { AU_MAGNETIC_T } from '../constants';
import { invertSmall } from '../lm';
import { auToNs, nsToAu } from './kinematics';

// TYPES //

export interface NodeAccumulatorOptions {
  /** Time window of the plot, ns (measured flight times). */
  tMinNs: number;
  tMaxNs: number;
  /** Bin width, ns (default 0.2). */
  binNs?: number;
  /** Impact point of p⊥ = 0 particles, mm. */
  centreMm: readonly [number, number];
}

export interface NodeAccumulator {
  /** Adds a chunk of events (mm, mm, ns). */
  add(x: ArrayLike<number>, y: ArrayLike<number>, tof: ArrayLike<number>): void;
  /** Bin centres (ns), counts and mean R² (mm²; NaN in empty bins). */
  curve(): { tNs: Float64Array; counts: Float64Array; meanR2: Float64Array };
}

export interface NodeFitOptions {
  /** A rough t₀ (ns) that fixes the node numbers; within T/2 of the truth. */
  t0GuessNs: number;
  /** Bins with fewer events are ignored (default 20). */
  minCounts?: number;
  /** A candidate's smoothed ⟨R²⟩ must be below this fraction of the highest within ±5 % of the window (default 0.2). */
  depth?: number;
}

export type NodeFit =
  | {
      ok: true;
      /** Refined node times (ns) and their node numbers n. */
      nodesNs: number[];
      nodeNumbers: number[];
      periodNs: number;
      /** Standard error of the period (node σ’s from their cubic fits, scaled up by the scatter). */
      periodErrNs: number | null;
      /** |B| in tesla (the sign is not given by the spacing). */
      magneticFieldT: number;
      magneticFieldErrT: number | null;
      t0Ns: number;
      t0ErrNs: number | null;
      /** Root-mean-square residual of the node times about the straight line, ns. */
      residualRmsNs: number;
    }
  | { ok: false; reason: string };

// FUNCTIONS //

/**
 * Creates the streaming accumulator of the R²-versus-t plot.
 *
 * @throws {RangeError} for an empty window or a bin width ≤ 0
 */
export function createNodeAccumulator(options: NodeAccumulatorOptions): NodeAccumulator {
  const bin = options.binNs ?? 0.2;
  const { tMinNs, tMaxNs } = options;
  if (!(tMaxNs > tMinNs) || !(bin > 0)) throw new RangeError('the time window must be non-empty and the bin > 0 ns');
  const n = Math.ceil((tMaxNs - tMinNs) / bin);
  if (n > 1_000_000) throw new RangeError(`${n} time bins is too many; use a wider bin`);
  const counts = new Float64Array(n);
  const sumR2 = new Float64Array(n);
  const [cx, cy] = options.centreMm;
  return {
    add(x, y, tof) {
      const m = x.length;
      if (y.length !== m || tof.length !== m) throw new RangeError('x, y and tof differ in length');
      for (let i = 0; i < m; i++) {
        const k = Math.floor(((tof[i] as number) - tMinNs) / bin);
        if (!(k >= 0 && k < n)) continue;
        const dx = (x[i] as number) - cx;
        const dy = (y[i] as number) - cy;
        const r2 = dx * dx + dy * dy;
        if (!Number.isFinite(r2)) continue;
        counts[k] = (counts[k] as number) + 1;
        sumR2[k] = (sumR2[k] as number) + r2;
      }
    },
    curve() {
      const tNs = new Float64Array(n);
      const meanR2 = new Float64Array(n);
      for (let k = 0; k < n; k++) {
        tNs[k] = tMinNs + (k + 0.5) * bin;
        meanR2[k] = (counts[k] as number) > 0 ? (sumR2[k] as number) / (counts[k] as number) : Number.NaN;
      }
      return { tNs, counts: Float64Array.from(counts), meanR2 };
    },
  };
}

/**
 * Fits the node spacing of an accumulated R²-versus-t plot.
 *
 * @returns period, |B| and t₀ with their errors, or the reason no fit was possible
 */
export function fitNodeSpacing(acc: NodeAccumulator, options: NodeFitOptions): NodeFit {
  const { tNs, counts, meanR2 } = acc.curve();
  const n = tNs.length;
  const minCounts = options.minCounts ?? 20;
  const depth = options.depth ?? 0.2;
  const bin = n > 1 ? (tNs[1] as number) - (tNs[0] as number) : 1;
  const ok = (k: number) => (counts[k] as number) >= minCounts && Number.isFinite(meanR2[k] as number);
  // 3-bin running mean over usable bins
  const smooth = new Float64Array(n).fill(Number.NaN);
  for (let k = 1; k < n - 1; k++) {
    if (ok(k - 1) && ok(k) && ok(k + 1)) {
      smooth[k] = ((meanR2[k - 1] as number) + (meanR2[k] as number) + (meanR2[k + 1] as number)) / 3;
    }
  }
  const finite = Array.from(smooth).filter(Number.isFinite);
  if (finite.length < 10) return { ok: false, reason: 'too few time bins with events' };
  // candidates: bins that are the minimum of the smoothed curve within ±w and below `depth` times its maximum there
  // (a local test: the amplitude ⟨p⊥²⟩ may change along t, so a global threshold would miss nodes)
  const w = Math.max(5, Math.round(0.05 * n));
  const cands: number[] = [];
  for (let k = 0; k < n; k++) {
    const v = smooth[k] as number;
    if (!Number.isFinite(v)) continue;
    let lo = Number.POSITIVE_INFINITY;
    let hi = Number.NEGATIVE_INFINITY;
    let usable = 0;
    for (let i = Math.max(0, k - w); i <= Math.min(n - 1, k + w); i++) {
      const u = smooth[i] as number;
      if (!Number.isFinite(u)) continue;
      usable++;
      if (u < lo) lo = u;
      if (u > hi) hi = u;
    }
    if (usable >= w && v === lo && v < depth * hi) cands.push(k);
  }
  // a node whose dip the noise crossed twice gives two candidates close together: keep the deeper one
  if (cands.length >= 2) {
    let maxGap = 0;
    for (let i = 1; i < cands.length; i++) maxGap = Math.max(maxGap, (cands[i] as number) - (cands[i - 1] as number));
    const minSep = 0.3 * maxGap;
    for (let i = 1; i < cands.length; ) {
      if ((cands[i] as number) - (cands[i - 1] as number) < minSep) {
        const drop = (smooth[cands[i] as number] as number) < (smooth[cands[i - 1] as number] as number) ? i - 1 : i;
        cands.splice(drop, 1);
      } else i++;
    }
  }
  if (cands.length < 2) {
    return {
      ok: false,
      reason: `${cands.length} cyclotron node(s) in the window; the spacing needs at least two (widen the time window)`,
    };
  }
  const gaps = cands.slice(1).map((c, i) => ((c - (cands[i] as number)) as number) * bin);
  const gapSorted = [...gaps].sort((a, b) => a - b);
  const period0 = gapSorted[Math.floor(gapSorted.length / 2)] as number;
  // refine each node: weighted cubic through ⟨R²⟩ within ±8 % of a period
  const half = Math.max(2, Math.round((0.08 * period0) / bin));
  const nodes: number[] = [];
  const nodeErrs: number[] = [];
  for (const c of cands) {
    const v = refineVertex(tNs, counts, meanR2, c, half, minCounts);
    if (v !== null) {
      nodes.push(v.t);
      nodeErrs.push(v.err);
    }
  }
  if (nodes.length < 2) return { ok: false, reason: 'the nodes could not be refined (too few events near them)' };
  // node numbers relative to the first, from the rough spacing
  const j = nodes.map((t) => Math.round((t - (nodes[0] as number)) / period0));
  for (let i = 1; i < j.length; i++) {
    if (j[i] === j[i - 1]) return { ok: false, reason: 'two node candidates lie within one period of each other' };
  }
  const rough = lineFit(j, nodes, nodeErrs);
  const n1 = Math.round(((nodes[0] as number) - options.t0GuessNs) / rough.slope);
  if (n1 < 1) {
    return { ok: false, reason: `the rough t₀ ${options.t0GuessNs} ns lies after the first node; give an earlier one` };
  }
  // t_n = t₀ + n T over the node numbers n: the intercept is t₀, with its error (and its correlation with T)
  const numbers = j.map((x) => x + n1);
  const fit = lineFit(numbers, nodes, nodeErrs);
  const period = fit.slope;
  const t0 = fit.intercept;
  // |Ω| = 2π/T (a.u.), B = |Ω| in a.u. of magnetic field for an electron (§7.7)
  const omega = (2 * Math.PI) / nsToAu(period);
  const bT = omega * AU_MAGNETIC_T;
  return {
    ok: true,
    nodesNs: nodes,
    nodeNumbers: numbers,
    periodNs: period,
    periodErrNs: fit.slopeErr,
    magneticFieldT: bT,
    magneticFieldErrT: fit.slopeErr === null ? null : (bT * fit.slopeErr) / period,
    t0Ns: t0,
    t0ErrNs: fit.interceptErr,
    residualRmsNs: fit.rms,
  };
}

/**
 * Count-weighted least-squares cubic a + bu + qu² + gu³ through ⟨R²⟩ around bin c (u = t − t_c); the node is the
 * cubic's local minimum. A cubic, not a parabola: ⟨R²⟩ = A(t) sin²(π(t − t_n)/T) with an amplitude A that changes
 * along t (⟨p⊥²⟩ depends on p_s, hence on t) is (A_n + A′δ)(πδ/T)² near the node, whose minimum stays at δ = 0 in a
 * cubic fit but moves in a parabola fit. Returns the vertex time and its standard error (delta method on the
 * parameter covariance, scaled by the weighted residual variance), or null.
 */
function refineVertex(
  t: Float64Array,
  w: Float64Array,
  y: Float64Array,
  c: number,
  half: number,
  minCounts: number,
): { t: number; err: number } | null {
  // a node whose window the time window cuts would be pulled toward the inside: refused
  if (c - half < 0 || c + half > t.length - 1) return null;
  const K = 4;
  const tc = t[c] as number;
  const M = new Float64Array(K * K);
  const r = new Float64Array(K);
  let used = 0;
  let below = 0;
  let above = 0;
  const basis = new Float64Array(K);
  for (let k = c - half; k <= c + half; k++) {
    const wk = w[k] as number;
    const yk = y[k] as number;
    if (wk < minCounts || !Number.isFinite(yk)) continue;
    const u = (t[k] as number) - tc;
    if (u < 0) below++;
    if (u > 0) above++;
    basis[0] = 1;
    for (let e = 1; e < K; e++) basis[e] = (basis[e - 1] as number) * u;
    for (let i = 0; i < K; i++) {
      r[i] = (r[i] as number) + wk * (basis[i] as number) * yk;
      for (let j = 0; j < K; j++)
        M[i * K + j] = (M[i * K + j] as number) + wk * (basis[i] as number) * (basis[j] as number);
    }
    used++;
  }
  if (used < 7 || below < 3 || above < 3) return null;
  const inv = invertSmall(K, M);
  if (inv === null) return null;
  const p = new Float64Array(K);
  for (let i = 0; i < K; i++)
    for (let j = 0; j < K; j++) p[i] = (p[i] as number) + (inv[i * K + j] as number) * (r[j] as number);
  const [a, b, q, g] = p as unknown as [number, number, number, number];
  // local minimum: b + 2q v + 3g v² = 0 with 2q + 6g v > 0, the root nearest the centre
  let v: number;
  if (Math.abs(g) < 1e-300) {
    v = -b / (2 * q);
  } else {
    const disc = q * q - 3 * g * b;
    if (disc < 0) return null;
    const roots = [(-q + Math.sqrt(disc)) / (3 * g), (-q - Math.sqrt(disc)) / (3 * g)];
    const minima = roots.filter((x) => 2 * q + 6 * g * x > 0);
    if (minima.length === 0) return null;
    v = minima.reduce((best, x) => (Math.abs(x) < Math.abs(best) ? x : best));
  }
  const step = (t[1] as number) - (t[0] as number);
  if (!Number.isFinite(v) || Math.abs(v) > (half + 0.5) * step) return null;
  let chi2 = 0;
  for (let k = c - half; k <= c + half; k++) {
    const wk = w[k] as number;
    const yk = y[k] as number;
    if (wk < minCounts || !Number.isFinite(yk)) continue;
    const u = (t[k] as number) - tc;
    chi2 += wk * (yk - a - b * u - q * u * u - g * u * u * u) ** 2;
  }
  const sigma2 = chi2 / (used - K);
  // dv/dθ = −(∂F/∂θ)/(∂F/∂v), F = b + 2q v + 3g v²
  const dFdv = 2 * q + 6 * g * v;
  const grad = [0, -1 / dFdv, (-2 * v) / dFdv, (-3 * v * v) / dFdv];
  let varV = 0;
  for (let i = 0; i < K; i++)
    for (let j = 0; j < K; j++) varV += (grad[i] as number) * (grad[j] as number) * (inv[i * K + j] as number);
  return { t: tc + v, err: Math.sqrt(Math.max(sigma2 * varV, 0)) };
}

/**
 * Weighted straight line y = c + s x (weights 1/σ²). Standard errors from the σ's, scaled up by √(χ²/(n − 2)) when
 * the scatter is larger than they say (never down); with two points from the σ's alone.
 */
function lineFit(
  x: number[],
  y: number[],
  sig: number[],
): { slope: number; intercept: number; slopeErr: number | null; interceptErr: number | null; rms: number } {
  const n = x.length;
  let S = 0;
  let Sx = 0;
  let Sy = 0;
  let Sxx = 0;
  let Sxy = 0;
  for (let i = 0; i < n; i++) {
    const w = 1 / Math.max((sig[i] as number) ** 2, 1e-12);
    S += w;
    Sx += w * (x[i] as number);
    Sy += w * (y[i] as number);
    Sxx += w * (x[i] as number) ** 2;
    Sxy += w * (x[i] as number) * (y[i] as number);
  }
  const det = S * Sxx - Sx * Sx;
  const slope = (S * Sxy - Sx * Sy) / det;
  const intercept = (Sxx * Sy - Sx * Sxy) / det;
  let ss = 0;
  let chi2 = 0;
  for (let i = 0; i < n; i++) {
    const d = (y[i] as number) - intercept - slope * (x[i] as number);
    ss += d * d;
    chi2 += (d * d) / Math.max((sig[i] as number) ** 2, 1e-12);
  }
  const rms = Math.sqrt(ss / n);
  const scale = n > 2 ? Math.max(1, Math.sqrt(chi2 / (n - 2))) : 1;
  const ok = sig.every((v) => Number.isFinite(v) && v > 0);
  return {
    slope,
    intercept,
    slopeErr: ok ? scale * Math.sqrt(S / det) : null,
    interceptErr: ok ? scale * Math.sqrt(Sxx / det) : null,
    rms,
  };
}

/** Period (ns) of the cyclotron motion of an electron in B (tesla): 2π/|Ω| with Ω = B in a.u. (§7.7). */
export function cyclotronPeriodNs(magneticFieldT: number): number {
  return auToNs((2 * Math.PI) / Math.abs(magneticFieldT / AU_MAGNETIC_T));
}
