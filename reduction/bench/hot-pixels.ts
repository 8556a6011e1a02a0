/**
 * Hot-pixel detection on a counting frame. A pixel is hot when its count is improbably high against its
 * neighbours along a line through it: for each of the four lines (row, column, two diagonals) the pixel's count c
 * and the sums a, b of the `radius` neighbours on either side are three Poisson counts that, on a locally flat or
 * linear profile along the line, have rates λ, radius·λ, radius·λ; then c given N = c + a + b is
 * Binomial(N, 1/(1 + 2·radius)) whatever λ is, and the upper tail P(X ≥ c) is an exact test of "this pixel is no
 * brighter than its neighbours" that needs no estimate of λ [common practice: the conditional test of two Poisson
 * rates]. The line used is the brightest one whose two sides agree (|a − b| within 3 counting σ): on the crest of a
 * narrow ring or lobe that is the line along the crest, so the pixel is compared with crest pixels and not with
 * the flanks (a 3 × 3 median mixes both and flags crest pixels); a line through another hot pixel has disagreeing
 * sides and is not used, so hot pixels next to each other are still found. A pixel is flagged when its tail
 * probability is below α/n_pixels (Bonferroni, family-wise α over the frame) and c exceeds the line's level by
 * `minExcess`. Detection is repeated with the flagged pixels left out of the neighbourhoods until nothing new is
 * found (at most 4 passes), which finds the middle pixel of a run of three.
 */
import { type BenchFrame, type BenchToolResult, requireFrame } from './types';

// TYPES //

export interface HotPixelOptions {
  /** Neighbours on each side along a line (default 1; 1 … 5). */
  radius?: number;
  /** Family-wise false-alarm probability over the frame (default 1e-3). */
  alpha?: number;
  /** Minimum excess over the local level, counts (default 5). */
  minExcess?: number;
  /** Lowest local level used, counts (default 0.05; only for the reported level and excess). */
  floor?: number;
}

export type HotPixelResult = BenchToolResult<
  {
    /** Row-major indices iy·n_x + ix of the hot pixels, ascending. */
    indices: number[];
    /** [x, y] of each hot pixel (calibration `bad_pixels` order). */
    pixels: [number, number][];
    count: number;
    /** Groups of hot pixels that touch (8-neighbourhood), as indices into `indices`' values; singles included. */
    clusters?: number[][];
  },
  /** Expected number of false alarms (≤ α by construction); there is no standard error of a set. */
  { expectedFalseAlarms: number },
  /** Excess counts c − λ of each hot pixel (same order), and the local level λ (the line's neighbour mean). */
  { excess: number[]; level: number[]; rms: number },
  { alpha: number; pixelTailProbability: number; radius: number; pixelsTested: number; passes?: number }
>;

// VARIABLES //

/** The four lines through a pixel: (dx, dy) steps. */
const LINES: [number, number][] = [
  [1, 0],
  [0, 1],
  [1, 1],
  [1, -1],
];

/** Two sides of a line agree when (a − b)² ≤ AGREE² (a + b) (3 counting σ). */
const AGREE = 3;
/** Lines are pooled with the chosen one when (s − s_best)² ≤ POOL² (s + s_best). */
const POOL = 2;

const LOG_FACT: number[] = [0];

// FUNCTIONS //

function logFactorial(n: number): number {
  for (let k = LOG_FACT.length; k <= n; k++) LOG_FACT.push(LOG_FACT[k - 1]! + Math.log(k));
  return LOG_FACT[n]!;
}

/**
 * log P(X ≥ c) for X ~ Binomial(n, p), integer 0 ≤ c ≤ n, 0 < p < 1 (summed from c upward; the terms fall off
 * fast above the mean, and the tail is only asked for above it).
 */
export function logBinomialUpperTail(c: number, n: number, p: number): number {
  if (c <= 0) return 0;
  if (c > n) return Number.NEGATIVE_INFINITY;
  const lp = Math.log(p);
  const lq = Math.log1p(-p);
  const logPc = logFactorial(n) - logFactorial(c) - logFactorial(n - c) + c * lp + (n - c) * lq;
  let sum = 1;
  let term = 1;
  const ratio = p / (1 - p);
  for (let k = c; k < n; k++) {
    term *= ((n - k) / (k + 1)) * ratio;
    sum += term;
    if (term < 1e-17 * sum) break;
  }
  return logPc + Math.log(sum);
}

/**
 * Finds hot pixels.
 *
 * @param frame - raw counts frame (masked pixels are neither tested nor used as neighbours)
 * @param options - neighbours per side, false-alarm probability, minimum excess, level floor
 * @returns hot-pixel indices and positions, their count and clusters, excess counts, diagnostics and warnings
 * @throws {RangeError} for a bad frame or options
 */
export function findHotPixels(frame: BenchFrame, options: HotPixelOptions = {}): HotPixelResult {
  requireFrame(frame);
  const radius = options.radius ?? 1;
  const alpha = options.alpha ?? 1e-3;
  const minExcess = options.minExcess ?? 5;
  const floor = options.floor ?? 0.05;
  if (!(Number.isInteger(radius) && radius >= 1 && radius <= 5)) throw new RangeError(`radius must be 1 … 5`);
  if (!(alpha > 0 && alpha < 1)) throw new RangeError(`alpha must lie in (0, 1), got ${alpha}`);
  if (!(minExcess >= 0) || !(floor > 0)) throw new RangeError('minExcess must be ≥ 0 and floor > 0');
  const { nX, nY, counts, mask } = frame;
  const usable = new Uint8Array(nX * nY);
  let tested = 0;
  for (let i = 0; i < nX * nY; i++) {
    if (!mask || mask[i]) {
      usable[i] = 1;
      tested++;
    }
  }
  const pTail = alpha / Math.max(tested, 1);
  const logP = Math.log(pTail);
  const hot = new Uint8Array(nX * nY);
  const lineSum = new Float64Array(LINES.length);
  const lineAgrees = new Uint8Array(LINES.length);
  const levelOf = new Float64Array(nX * nY);

  /** One side's sum along (dx, dy), or −1 when a pixel of it is outside, masked or flagged. */
  const side = (ix: number, iy: number, dx: number, dy: number): number => {
    let s = 0;
    for (let k = 1; k <= radius; k++) {
      const x = ix + k * dx;
      const y = iy + k * dy;
      if (x < 0 || y < 0 || x >= nX || y >= nY) return -1;
      const j = y * nX + x;
      if (!usable[j] || hot[j]) return -1;
      s += Math.max(counts[j]!, 0);
    }
    return s;
  };

  /** The count at distance k along (dx, dy), or −1 when outside, masked or flagged. */
  const at = (ix: number, iy: number, dx: number, dy: number, k: number): number => {
    const x = ix + k * dx;
    const y = iy + k * dy;
    if (x < 0 || y < 0 || x >= nX || y >= nY) return -1;
    const j = y * nX + x;
    return usable[j] && !hot[j] ? Math.max(counts[j]!, 0) : -1;
  };
  // a peak along the line: f(k) = f₀ − q k², side mean m₁ = f₀ − q K₁ (K₁ = mean of k² over 1 … radius), next
  // pixel m₂ = f₀ − q (radius + 1)²
  const k1 = ((radius + 1) * (2 * radius + 1)) / 6;
  const k2 = (radius + 1) * (radius + 1);

  /** Tests pixel i; returns the line's level λ when it is hot, else −1. */
  const test = (ix: number, iy: number, c: number): number => {
    // the brightest line whose sides agree; else the line whose sides agree best
    let best = -1;
    let bestLine = 0;
    let bestAgreeing = false;
    let bestScore = 0;
    for (let l = 0; l < LINES.length; l++) {
      const [dx, dy] = LINES[l]!;
      const a = side(ix, iy, dx, dy);
      const b = side(ix, iy, -dx, -dy);
      lineSum[l] = a < 0 || b < 0 ? -1 : a + b;
      lineAgrees[l] = 0;
      if (a < 0 || b < 0) continue;
      const d = (a - b) * (a - b);
      const agreeing = d <= AGREE * AGREE * Math.max(a + b, 1);
      lineAgrees[l] = agreeing ? 1 : 0;
      const score = agreeing ? a + b : -d / Math.max(a + b, 1);
      if (best < 0 || (agreeing && !bestAgreeing) || (agreeing === bestAgreeing && score > bestScore)) {
        best = a + b;
        bestLine = l;
        bestAgreeing = agreeing;
        bestScore = score;
      }
    }
    if (best < 0) return -1;
    // pool the other lines whose level (pair mean: unbiased on a linear slope even where its sides differ) matches
    // the chosen one within POOL counting σ: all four on a flat background or a slope, which gives the test the
    // power of 8 neighbours; only the crest line on a narrow ridge; never a line through a brighter hot neighbour
    let sum = best;
    let lines = 1;
    for (let l = 0; l < LINES.length; l++) {
      const sl = lineSum[l]!;
      if (l === bestLine || sl < 0 || !bestAgreeing) continue;
      if ((sl - best) * (sl - best) <= POOL * POOL * Math.max(sl + best, 1)) {
        sum += sl;
        lines++;
      }
    }
    const m1 = sum / (2 * radius * lines);
    const m1Best = best / (2 * radius);
    // the crest of a narrow lobe is a peak along every line: the pixel's expected count exceeds its neighbours' by
    // the curvature, estimated from the next pixel on each side of the chosen line (q ≥ 0 only: a dip or a bright
    // pixel further out leaves the plain test, which is then conservative)
    let lambda = m1;
    const [dx, dy] = LINES[bestLine]!;
    const fa = at(ix, iy, dx, dy, radius + 1);
    const fb = at(ix, iy, -dx, -dy, radius + 1);
    if (fa >= 0 && fb >= 0) {
      const q = (m1Best - 0.5 * (fa + fb)) / (k2 - k1);
      if (q > 0) lambda = m1 + q * k1;
    }
    if (c - lambda < minExcess) return -1;
    const cInt = Math.round(c);
    const n = cInt + Math.round(sum);
    // under the null, c : (neighbour sum) = λ : 2·radius·lines·m₁
    const m = 2 * radius * lines;
    const p = m1 > 0 ? lambda / (lambda + m * m1) : 1 / (1 + m);
    return logBinomialUpperTail(cInt, n, p) < logP ? lambda : -1;
  };

  let passes = 0;
  let candidates: number[] | null = null;
  for (; passes < 4; passes++) {
    const found: number[] = [];
    const visit = (i: number) => {
      if (!usable[i] || hot[i]) return;
      const c = counts[i]!;
      if (!(c >= 1)) return;
      const lambda = test(i % nX, Math.floor(i / nX), c);
      if (lambda >= 0) {
        found.push(i);
        levelOf[i] = Math.max(lambda, floor);
      }
    };
    if (candidates === null) {
      for (let i = 0; i < nX * nY; i++) visit(i);
    } else {
      for (const i of candidates) visit(i);
    }
    if (found.length === 0) break;
    for (const i of found) hot[i] = 1;
    // the next pass retests only the neighbours (within `radius`) of what was just flagged
    const next = new Set<number>();
    for (const i of found) {
      const ix = i % nX;
      const iy = Math.floor(i / nX);
      for (let dy = -radius; dy <= radius; dy++) {
        for (let dx = -radius; dx <= radius; dx++) {
          const x = ix + dx;
          const y = iy + dy;
          if (x < 0 || y < 0 || x >= nX || y >= nY) continue;
          const j = y * nX + x;
          if (!hot[j]) next.add(j);
        }
      }
    }
    candidates = Array.from(next);
    if (candidates.length === 0) {
      passes++;
      break;
    }
  }

  const indices: number[] = [];
  const pixels: [number, number][] = [];
  const excess: number[] = [];
  const level: number[] = [];
  for (let i = 0; i < nX * nY; i++) {
    if (!hot[i]) continue;
    indices.push(i);
    pixels.push([i % nX, Math.floor(i / nX)]);
    excess.push(counts[i]! - levelOf[i]!);
    level.push(levelOf[i]!);
  }
  // clusters: connected groups of flagged pixels (8-neighbourhood)
  const seen = new Set<number>();
  const clusters: number[][] = [];
  for (const i of indices) {
    if (seen.has(i)) continue;
    const group: number[] = [];
    const stack = [i];
    seen.add(i);
    while (stack.length) {
      const j = stack.pop()!;
      group.push(j);
      const jx = j % nX;
      const jy = Math.floor(j / nX);
      for (let dy = -1; dy <= 1; dy++) {
        for (let dx = -1; dx <= 1; dx++) {
          const x = jx + dx;
          const y = jy + dy;
          if (x < 0 || y < 0 || x >= nX || y >= nY) continue;
          const k = y * nX + x;
          if (hot[k] && !seen.has(k)) {
            seen.add(k);
            stack.push(k);
          }
        }
      }
    }
    clusters.push(group.sort((a, b) => a - b));
  }
  const warnings: string[] = [];
  if (indices.length > 0.01 * tested) {
    warnings.push(
      `${indices.length} pixels (more than 1 %) are flagged: the frame may have structure finer than a pixel, or not be a counting frame (raise minExcess).`,
    );
  }
  const big = clusters.filter((g) => g.length > 3).length;
  if (big > 0) {
    warnings.push(
      `${big} group(s) of more than three touching hot pixels: a bright spot may be real signal (a narrow feature or a reflection) rather than a detector defect; check before masking.`,
    );
  }
  let ss = 0;
  for (const e of excess) ss += e * e;
  return {
    value: { indices, pixels, count: indices.length, clusters },
    stdErr: { expectedFalseAlarms: alpha },
    residual: { excess, level, rms: indices.length ? Math.sqrt(ss / indices.length) : 0 },
    diagnostics: { alpha, pixelTailProbability: pTail, radius, pixelsTested: tested, passes },
    warnings,
  };
}
