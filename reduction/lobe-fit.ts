/**
 * Joint Poisson maximum-likelihood fit of all lobes of one angular distribution plus a constant
 * (SCIENCE.md §9.1 item 1): λ(θ) = B + Σ_k A_k f(θ; μ_k, s_k), minimising Σ_i [λ_i − N_i ln λ_i] over the bins of the
 * fit window. Lobe shapes: von Mises f = exp(κ(cos(θ − μ) − 1)) with κ = 1/s² (s in rad; suits broad lobes, no edge
 * at ±180°) or Gaussian f = exp(−wrap(θ − μ)²/(2s²)). `s` is reported as the width (degrees).
 *
 * Window (`follow`): each lobe contributes the bins within ±3 s_k of its fitted centre, clipped half-way to the
 * neighbouring lobe centres; the union of these bins is fitted, and the fit is repeated on the new window until the
 * window stops changing (at most 5 passes). ±3 s rather than ±2 s because for a Gaussian lobe without background
 * the bins beyond ±2σ carry 26 % of the Fisher information on the centre (2[2φ(2) + 1 − Φ(2)] = 0.26, φ and Φ the
 * standard normal density and distribution), beyond ±3σ only 3 % [derived]. `fixed`: ±halfWidth around every lobe.
 *
 * Start: the n-fold harmonic direction of the whole distribution (§9.1 item 3) placed next to each candidate when the
 * candidates form the n-fold pattern, else the candidate; widths from the half-maximum points of the distribution
 * smoothed by 8° (the smoothing taken off in quadrature); B from the minimum of the smoothed distribution. The first
 * pass holds the widths at their start values, then frees them.
 *
 * Minimiser: Fisher scoring with Marquardt damping (the Poisson analogue of Gauss–Newton; information matrix
 * I = Σ_i ∇λ_i ∇λ_iᵀ / λ_i). The reported covariance is I⁻¹ at the solution (the Cramér–Rao form of the inverse
 * Hessian). A step that makes some λ_i ≤ 0 is refused. The background is bounded below by zero (a count rate is not
 * negative): a step that would take B below 0 holds it at 0 and solves for the other parameters (an active-set
 * step), and at the bound B is left out of the covariance. Without the bound, overlapping broad lobes (three 35°
 * lobes 120° apart) trade a negative B against wider lobes and the angles grow heavy tails.
 */
import { RAD_PER_DEG, wrapDeg } from './angles';
import { harmonicAngleKernel } from './harmonic';
import { invertSmall, solveSmall } from './lm';
import { smoothCircular } from './smoothing';

// TYPES //

export type LobeShape = 'von_mises' | 'gaussian';

export interface JointFitOptions {
  shape: LobeShape;
  /** `follow`: ±3 s of each lobe clipped at its neighbours; a number: fixed half-window in degrees. */
  window: 'follow' | number;
  /** Starting widths (deg) to use instead of the half-maximum estimate (bootstrap warm start). */
  startWidthsDeg?: readonly number[] | null;
}

export interface JointLobe {
  angleDeg: number;
  widthDeg: number;
  amplitude: number;
  /** σ(angle) from the inverse Fisher information, degrees. */
  angleSigmaDeg: number;
  /** Window of this lobe [lo, hi], degrees relative to the lab (lo may be < −180). */
  windowDeg: [number, number];
  /** True when the centre lies within 10 % of the half-window from a window edge. */
  nearEdge: boolean;
}

export interface JointFitResult {
  ok: boolean;
  /** Why the fit was refused (plain words), null when ok. */
  reason: string | null;
  lobes: JointLobe[];
  background: number;
  iterations: number;
  passes: number;
}

// VARIABLES //

const MAX_PASSES = 5;
const MAX_ITER = 60;
const WINDOW_SIGMAS = 3;
/** Smoothing of the distribution for the start widths only (deg). */
const WIDTH_SMOOTHING_DEG = 8;

// FUNCTIONS //

/** Start widths (deg) from the half-maximum points of the smoothed distribution around each start. */
function halfMaxWidths(thetaDeg: ArrayLike<number>, ys: ArrayLike<number>, starts: number[], base: number): number[] {
  const M = thetaDeg.length;
  const bin = 360 / M;
  return starts.map((c) => {
    let j0 = 0;
    let best = Number.POSITIVE_INFINITY;
    for (let j = 0; j < M; j++) {
      const d = Math.abs(wrapDeg(thetaDeg[j]! - c));
      if (d < best) {
        best = d;
        j0 = j;
      }
    }
    const half = base + (ys[j0]! - base) / 2;
    let l = 0;
    while (l < M / 2 && ys[(j0 - l - 1 + M) % M]! > half) l++;
    let r = 0;
    while (r < M / 2 && ys[(j0 + r + 1) % M]! > half) r++;
    const fwhm = (l + r + 1) * bin;
    return Math.min(Math.max(fwhm / 2.3548, bin), 60);
  });
}

/**
 * Start widths (deg): half-maximum widths of the distribution smoothed with a Gaussian of {@link WIDTH_SMOOTHING_DEG},
 * the smoothing taken off in quadrature. Smoothing this wide keeps a noisy dip near the peak (10³ counts in a 35°
 * lobe) from ending the half-maximum search early, which sent the fit into a basin where one lobe shrinks onto noise.
 */
function startWidths(thetaDeg: ArrayLike<number>, y: ArrayLike<number>, starts: number[]): number[] {
  const M = thetaDeg.length;
  const bin = 360 / M;
  const wide = smoothCircular(y, WIDTH_SMOOTHING_DEG);
  let lo = Number.POSITIVE_INFINITY;
  for (let j = 0; j < M; j++) lo = Math.min(lo, wide[j]!);
  const s2 = WIDTH_SMOOTHING_DEG * WIDTH_SMOOTHING_DEG;
  return halfMaxWidths(thetaDeg, wide, starts, Math.max(lo, 0)).map((w) =>
    Math.max(Math.sqrt(Math.max(w * w - s2, 0)), bin),
  );
}

/** Workspace of the joint fit (bins of the window, model values and gradients). */
class FitSpace {
  idx: Int32Array;
  lam: Float64Array;
  jac: Float64Array;
  constructor(M: number, K: number) {
    this.idx = new Int32Array(M);
    this.lam = new Float64Array(M);
    this.jac = new Float64Array(M * K);
  }
}

/**
 * Model λ and its gradient at the window bins. Parameter layout: [B, A₁, μ₁, s₁, A₂, μ₂, s₂, …], μ and s in deg.
 * @returns false when some λ ≤ 0 or a width ≤ 0
 */
function evaluate(
  shape: LobeShape,
  nL: number,
  thetaDeg: ArrayLike<number>,
  n: number,
  fs: FitSpace,
  t: Float64Array,
  withJac: boolean,
): boolean {
  const K = 1 + 3 * nL;
  for (let k = 0; k < nL; k++) if (!(t[3 + 3 * k]! > 0)) return false;
  for (let i = 0; i < n; i++) {
    const th = thetaDeg[fs.idx[i]!]!;
    let lam = t[0]!;
    const o = i * K;
    if (withJac) fs.jac[o] = 1;
    for (let k = 0; k < nL; k++) {
      const A = t[1 + 3 * k]!;
      const mu = t[2 + 3 * k]!;
      const s = t[3 + 3 * k]!;
      let e: number;
      let dmu: number;
      let ds: number;
      if (shape === 'von_mises') {
        const sr = s * RAD_PER_DEG;
        const kap = 1 / (sr * sr);
        const v = (th - mu) * RAD_PER_DEG;
        const cv = Math.cos(v);
        e = Math.exp(kap * (cv - 1));
        dmu = A * e * kap * Math.sin(v) * RAD_PER_DEG;
        ds = A * e * (cv - 1) * ((-2 * kap) / s);
      } else {
        const d = wrapDeg(th - mu);
        const z = d / s;
        e = Math.exp(-0.5 * z * z);
        dmu = (A * e * z) / s;
        ds = (A * e * z * z) / s;
      }
      lam += A * e;
      if (withJac) {
        fs.jac[o + 1 + 3 * k] = e;
        fs.jac[o + 2 + 3 * k] = dmu;
        fs.jac[o + 3 + 3 * k] = ds;
      }
    }
    if (!(lam > 0)) return false;
    fs.lam[i] = lam;
  }
  return true;
}

function negLogLik(y: ArrayLike<number>, n: number, fs: FitSpace): number {
  let s = 0;
  for (let i = 0; i < n; i++) {
    const lam = fs.lam[i]!;
    const yi = y[fs.idx[i]!]!;
    s += lam - (yi !== 0 ? yi * Math.log(lam) : 0);
  }
  return s;
}

/** Fisher information I = Σ ∇λ∇λᵀ/λ and score g = Σ (1 − y/λ)∇λ at the current evaluation. */
function information(y: ArrayLike<number>, n: number, K: number, fs: FitSpace, info: Float64Array, g: Float64Array) {
  info.fill(0);
  g.fill(0);
  for (let i = 0; i < n; i++) {
    const lam = fs.lam[i]!;
    const yi = y[fs.idx[i]!]!;
    const o = i * K;
    const wr = 1 - yi / lam;
    const inv = 1 / lam;
    for (let p = 0; p < K; p++) {
      const jp = fs.jac[o + p]!;
      g[p] = g[p]! + wr * jp;
      const jpi = jp * inv;
      for (let q = 0; q <= p; q++) info[p * K + q] = info[p * K + q]! + jpi * fs.jac[o + q]!;
    }
  }
  for (let p = 0; p < K; p++) for (let q = p + 1; q < K; q++) info[p * K + q] = info[q * K + p]!;
}

/** Bins of the window (indices, in increasing angle) for the current centres and half-windows. */
function collectWindow(thetaDeg: ArrayLike<number>, centres: number[], halves: number[], idx: Int32Array): number {
  const M = thetaDeg.length;
  let n = 0;
  for (let j = 0; j < M; j++) {
    const th = thetaDeg[j]!;
    for (let k = 0; k < centres.length; k++) {
      if (Math.abs(wrapDeg(th - centres[k]!)) <= halves[k]!) {
        idx[n++] = j;
        break;
      }
    }
  }
  return n;
}

/** Half-windows: ±3 s clipped half-way to the nearest other centre (follow), or the fixed value. */
function halfWindows(centres: number[], widths: number[], window: 'follow' | number, bin: number): number[] {
  return centres.map((c, k) => {
    if (window !== 'follow') return Math.max(window, 1.5 * bin);
    let h = Math.min(WINDOW_SIGMAS * widths[k]!, 180);
    for (let m = 0; m < centres.length; m++) {
      if (m !== k) h = Math.min(h, Math.abs(wrapDeg(centres[m]! - c)) / 2);
    }
    return Math.max(h, 3 * bin);
  });
}

/**
 * Starting directions: the n-fold harmonic direction of the whole distribution next to each candidate when the
 * candidates sit within 360°/(4n) of the n-fold pattern; otherwise the candidates.
 */
export function harmonicStarts(thetaDeg: ArrayLike<number>, y: ArrayLike<number>, candidatesDeg: number[]): number[] {
  const n = candidatesDeg.length;
  if (n < 2) return candidatesDeg.slice();
  const h = harmonicAngleKernel(thetaDeg.length, n, thetaDeg, 1, 0, y, 1, 0);
  if (!Number.isFinite(h)) return candidatesDeg.slice();
  const period = 360 / n;
  const out: number[] = [];
  for (const c of candidatesDeg) {
    const m = Math.round(wrapDeg(c - h) / period);
    const s = wrapDeg(h + m * period);
    if (Math.abs(wrapDeg(s - c)) > period / 4) return candidatesDeg.slice();
    out.push(s);
  }
  return out;
}

/** Holds parameter `p` of the K × K system a·x = b at its current value (row and column of the identity, b_p = 0). */
function holdParameter(a: Float64Array, b: Float64Array, K: number, p: number): void {
  for (let q = 0; q < K; q++) {
    a[p * K + q] = 0;
    a[q * K + p] = 0;
  }
  a[p * K + p] = 1;
  b[p] = 0;
}

/**
 * Fits all lobes of an angular distribution jointly.
 *
 * @param thetaDeg - bin centres, degrees (equally spaced over 360°)
 * @param y - raw angular distribution (counts per bin)
 * @param ySmooth - smoothed distribution (start values only)
 * @param candidatesDeg - one candidate direction per lobe
 * @param options - shape and window rule
 * @returns the fit; `ok = false` with a reason when the data cannot support it
 */
export function fitLobesJointly(
  thetaDeg: ArrayLike<number>,
  y: ArrayLike<number>,
  ySmooth: ArrayLike<number>,
  candidatesDeg: number[],
  options: JointFitOptions,
): JointFitResult {
  const M = thetaDeg.length;
  const nL = candidatesDeg.length;
  const bin = 360 / M;
  const fail = (reason: string, it = 0, passes = 0): JointFitResult => ({
    ok: false,
    reason,
    lobes: [],
    background: Number.NaN,
    iterations: it,
    passes,
  });
  if (nL === 0) return fail('no lobe candidate');
  const K = 1 + 3 * nL;
  let yMin = Number.POSITIVE_INFINITY;
  for (let j = 0; j < M; j++) yMin = Math.min(yMin, ySmooth[j]!);
  const base = Math.max(yMin, 0);
  const starts = harmonicStarts(thetaDeg, y, candidatesDeg);
  const widths0 =
    options.startWidthsDeg && options.startWidthsDeg.length === nL
      ? options.startWidthsDeg.slice()
      : startWidths(thetaDeg, y, starts);
  const t = new Float64Array(K);
  t[0] = Math.max(base, 1e-6);
  for (let k = 0; k < nL; k++) {
    let j0 = 0;
    let best = Number.POSITIVE_INFINITY;
    for (let j = 0; j < M; j++) {
      const d = Math.abs(wrapDeg(thetaDeg[j]! - starts[k]!));
      if (d < best) {
        best = d;
        j0 = j;
      }
    }
    t[1 + 3 * k] = Math.max(ySmooth[j0]! - base, 1e-6);
    t[2 + 3 * k] = starts[k]!;
    t[3 + 3 * k] = widths0[k]!;
  }
  const fs = new FitSpace(M, K);
  const trial = new Float64Array(K);
  const info = new Float64Array(K * K);
  const g = new Float64Array(K);
  const a = new Float64Array(K * K);
  const step = new Float64Array(K);
  let halves = halfWindows(starts, widths0, options.window, bin);
  let n = collectWindow(thetaDeg, starts, halves, fs.idx);
  let prevKey = '';
  let iterations = 0;
  let passes = 0;
  let countsInWindow = 0;
  /** Damped Fisher scoring on the current window until the decrease stalls; returns the iterations used. */
  const iterate = (nWin: number, holdWidths: boolean): number => {
    let used = 0;
    let f = negLogLik(y, nWin, fs);
    let damp = 1e-3;
    for (let it = 0; it < MAX_ITER; it++, used++) {
      information(y, nWin, K, fs, info, g);
      let accepted = false;
      let fNew = f;
      while (damp < 1e12) {
        a.set(info);
        for (let p = 0; p < K; p++) a[p * K + p] = info[p * K + p]! * (1 + damp) + 1e-300;
        for (let p = 0; p < K; p++) step[p] = -g[p]!;
        // projected Newton [D. P. Bertsekas, SIAM J. Control Optim. 20, 221 (1982)]: B held at its bound B = 0 while
        // the score pushes it lower; otherwise a step that would take it below 0 is projected back onto B = 0
        if (t[0] === 0 && g[0]! > 0) holdParameter(a, step, K, 0);
        if (holdWidths) for (let k = 0; k < nL; k++) holdParameter(a, step, K, 3 + 3 * k);
        if (solveSmall(K, a, step)) {
          for (let p = 0; p < K; p++) trial[p] = t[p]! + step[p]!;
          if (trial[0]! < 0) trial[0] = 0;
          if (evaluate(options.shape, nL, thetaDeg, nWin, fs, trial, false)) {
            fNew = negLogLik(y, nWin, fs);
            if (Number.isFinite(fNew) && fNew <= f) {
              accepted = true;
              break;
            }
          }
        }
        damp *= 10;
      }
      if (!accepted) break;
      t.set(trial);
      evaluate(options.shape, nL, thetaDeg, nWin, fs, t, true);
      const dec = f - fNew;
      f = fNew;
      damp = Math.max(damp / 10, 1e-12);
      if (dec < 1e-10 * Math.max(1, Math.abs(f))) break;
    }
    return used;
  };
  for (; passes < MAX_PASSES; passes++) {
    countsInWindow = 0;
    for (let i = 0; i < n; i++) countsInWindow += y[fs.idx[i]!]!;
    if (n < K + 2) return fail(`only ${n} angular bins in the fit window for ${K} parameters`, iterations, passes);
    if (!(countsInWindow > 0)) return fail('no counts in the fit window', iterations, passes);
    if (!evaluate(options.shape, nL, thetaDeg, n, fs, t, true)) {
      t[0] = Math.max(t[0]!, 1e-3 * (countsInWindow / n));
      if (!evaluate(options.shape, nL, thetaDeg, n, fs, t, true)) return fail('invalid start values');
    }
    // first pass: the widths held at their start values until amplitudes, centres and background settle, then all
    // free (a staged start; a free start on noisy overlapping lobes can shrink one lobe onto a single noisy bin)
    if (passes === 0) iterations += iterate(n, true);
    iterations += iterate(n, false);
    // new window from the fitted centres and widths
    const centres = Array.from({ length: nL }, (_, k) => t[2 + 3 * k]!);
    const widths = Array.from({ length: nL }, (_, k) => t[3 + 3 * k]!);
    const newHalves = halfWindows(centres, widths, options.window, bin);
    const nNew = collectWindow(thetaDeg, centres, newHalves, fs.idx);
    let key = '';
    for (let i = 0; i < nNew; i++) key += `${fs.idx[i]},`;
    halves = newHalves;
    if (key === prevKey) {
      n = nNew;
      break;
    }
    prevKey = key;
    n = nNew;
  }
  // final state on the final window
  if (!evaluate(options.shape, nL, thetaDeg, n, fs, t, true)) return fail('the fit left the valid region');
  information(y, n, K, fs, info, g);
  // at the bound B = 0 (the score pushes it lower) the background is not a free parameter of the covariance
  const bAtBound = t[0] === 0 && g[0]! > 0;
  const infoFree = info.slice();
  if (bAtBound) {
    for (let p = 0; p < K; p++) {
      infoFree[p * K] = 0;
      infoFree[p] = 0;
    }
    infoFree[0] = 1;
  }
  const cov = invertSmall(K, infoFree);
  // the lobes must explain the window better than a constant does: likelihood-ratio statistic 2ΔlnL against a flat
  // λ = mean, above 9 + 2·(3N) (about 3σ for 3N extra parameters)
  {
    let sy = 0;
    for (let i = 0; i < n; i++) sy += y[fs.idx[i]!]!;
    const flat = sy / n;
    let nllFlat = 0;
    for (let i = 0; i < n; i++) {
      const yi = y[fs.idx[i]!]!;
      nllFlat += flat - (yi !== 0 && flat > 0 ? yi * Math.log(flat) : 0);
    }
    const lr = 2 * (nllFlat - negLogLik(y, n, fs));
    if (!(lr > 9 + 6 * nL)) {
      return fail('the lobes do not stand out from a flat distribution', iterations, passes);
    }
  }
  const lobes: JointLobe[] = [];
  for (let k = 0; k < nL; k++) {
    const A = t[1 + 3 * k]!;
    const mu = t[2 + 3 * k]!;
    const s = t[3 + 3 * k]!;
    const moved = Math.abs(wrapDeg(mu - starts[k]!));
    if (!(A > 0)) return fail(`lobe ${k + 1} has no positive amplitude`, iterations, passes);
    if (!(s >= bin / 4 && s <= 90)) {
      return fail(`the width of lobe ${k + 1} (${s.toFixed(1)}°) is outside ${(bin / 4).toFixed(2)}°…90°`);
    }
    if (moved > Math.max(halves[k]!, 180 / nL)) return fail(`lobe ${k + 1} left its fit window`, iterations, passes);
    const v = cov ? cov[(2 + 3 * k) * K + 2 + 3 * k]! : Number.NaN;
    if (!(v > 0) || !Number.isFinite(v)) return fail('the Fisher information is singular', iterations, passes);

    const h = halves[k]!;
    const c = wrapDeg(mu);
    lobes.push({
      angleDeg: c,
      widthDeg: s,
      amplitude: A,
      angleSigmaDeg: Math.sqrt(v),
      windowDeg: [c - h, c + h],
      nearEdge: false,
    });
  }
  return { ok: true, reason: null, lobes, background: t[0]!, iterations, passes: passes + 1 };
}
