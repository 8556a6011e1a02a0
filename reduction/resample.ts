/**
 * Flux-conserving resampling of raw detector pixels onto the Cartesian momentum grid and the polar (p, θ) grid.
 *
 * Method (sub-pixel splitting): each raw pixel is split into S × S sub-pixels (S from {@link defaultSubsamples}), each sub-pixel centre
 * is mapped through the calibration (FORMATS §2) and the pixel's counts are split equally, 1/S² per sub-pixel, into
 * the bin the sub-pixel centre falls in. The map pixel → (bin, weight) is precomputed once per scan (CSR layout) and
 * reused for every step and every frame, so the per-step cost is one pass over the pixels with no allocation.
 * The weights of one pixel sum to exactly 1; counts falling off the grid go to one extra overflow slot (index
 * `nBins`) so that Σ bins + overflow = Σ counts of the unmasked pixels (to rounding). Masked pixels (bad pixels,
 * low gain) have no entries: they are excluded, not zeroed.
 *
 * Conventions: pixel (ix, iy) has its centre at (xAxis[ix], yAxis[iy]) (default (ix, iy)) and a pitch of one
 * axis step (default 1 px); Cartesian bins are [py][px] row-major; polar bins [p][θ] row-major (see grids.ts).
 */
import type { CalibrationMap } from './calibration';
import type { CartesianGrid, PolarGrid } from './grids';
import { requireInteger, requireLength } from './validate';

// TYPES //

/** Sparse pixel → bin map (CSR). */
export interface PixelBinMap {
  nPixels: number;
  /** Number of real bins; index `nBins` is the off-grid overflow slot. */
  nBins: number;
  /** Entries of pixel i are rowStart[i] … rowStart[i+1] − 1. */
  rowStart: Int32Array;
  bin: Int32Array;
  /** Fraction of the pixel's counts, k/S². */
  weight: Float64Array;
}

/** Both maps of one detector geometry. */
export interface PixelBinMaps {
  cartesian: PixelBinMap;
  polar: PixelBinMap;
  subsamples: number;
  /** Unmasked pixels. */
  usedPixels: number;
}

export interface BuildMapsOptions {
  nX: number;
  nY: number;
  map: CalibrationMap;
  cartesian: CartesianGrid;
  polar: PolarGrid;
  /** 1 = use, 0 = excluded (length nX·nY), or null for all pixels. */
  mask: Uint8Array | null;
  /** Pixel-centre coordinates of the columns / rows (default 0 … n − 1). */
  xAxis?: ArrayLike<number> | null;
  yAxis?: ArrayLike<number> | null;
  /** S, sub-pixels per axis (1 … 8; default from {@link defaultSubsamples}). */
  subsamples?: number;
}

// FUNCTIONS //

/**
 * Default sub-pixel count: the smallest S with sub-pixels no larger than a quarter of the finer grid step,
 * S = clamp(⌈4h/Δ⌉, 2, 8), h = √|det A| the momentum size of one pixel, Δ = min(Cartesian step, ring width).
 *
 * @param map - calibration map
 * @param cartesian - Cartesian grid
 * @param polar - polar grid
 * @returns S
 * @example
 * // 0.0045 a.u. pixels on 0.01 a.u. grids: returns 2
 */
export function defaultSubsamples(map: CalibrationMap, cartesian: CartesianGrid, polar: PolarGrid): number {
  const h = Math.sqrt(Math.abs(map.a[0]! * map.a[3]! - map.a[1]! * map.a[2]!));
  const d = Math.min(cartesian.stepAu, polar.dpAu);
  return Math.min(8, Math.max(2, Math.ceil((4 * h) / d)));
}

class Growable {
  bin: Int32Array;
  weight: Float64Array;
  length = 0;
  constructor(capacity: number) {
    this.bin = new Int32Array(capacity);
    this.weight = new Float64Array(capacity);
  }
  push(b: number, w: number): void {
    if (this.length === this.bin.length) {
      const nb = new Int32Array(this.bin.length * 2);
      nb.set(this.bin);
      this.bin = nb;
      const nw = new Float64Array(this.weight.length * 2);
      nw.set(this.weight);
      this.weight = nw;
    }
    this.bin[this.length] = b;
    this.weight[this.length] = w;
    this.length++;
  }
  finish(nPixels: number, nBins: number, rowStart: Int32Array): PixelBinMap {
    // views, not copies (the spare capacity stays allocated; copying 10–20 MB costs more than it saves)
    return {
      nPixels,
      nBins,
      rowStart,
      bin: this.bin.subarray(0, this.length),
      weight: this.weight.subarray(0, this.length),
    };
  }
}

function pitch(axis: ArrayLike<number> | null | undefined, i: number, n: number): number {
  if (!axis || n < 2) return 1;
  const a = i > 0 ? axis[i]! - axis[i - 1]! : axis[1]! - axis[0]!;
  return Math.abs(a) > 0 ? Math.abs(a) : 1;
}

/** Sorts the first `m` entries of `a` (insertion sort; m ≤ 64). */
function sortSmall(a: Int32Array, m: number): void {
  for (let i = 1; i < m; i++) {
    const v = a[i]!;
    let j = i - 1;
    while (j >= 0 && a[j]! > v) {
      a[j + 1] = a[j]!;
      j--;
    }
    a[j + 1] = v;
  }
}

function pushRuns(g: Growable, scratch: Int32Array, m: number, w1: number): void {
  sortSmall(scratch, m);
  let run = 1;
  for (let k = 1; k <= m; k++) {
    if (k < m && scratch[k] === scratch[k - 1]) {
      run++;
    } else {
      g.push(scratch[k - 1]!, run * w1);
      run = 1;
    }
  }
}

/**
 * Precomputes the pixel → bin maps of a detector geometry for the Cartesian and the polar grid.
 *
 * @param o - detector size, calibration map, grids, mask, optional pixel axes and sub-pixel count
 * @returns the two maps
 * @throws {RangeError} for a bad size, mask length or sub-pixel count
 */
export function buildPixelBinMaps(o: BuildMapsOptions): PixelBinMaps {
  const nX = requireInteger('nX', o.nX, 1, 8192);
  const nY = requireInteger('nY', o.nY, 1, 8192);
  const S = requireInteger('subsamples', o.subsamples ?? defaultSubsamples(o.map, o.cartesian, o.polar), 1, 8);
  if (o.mask) requireLength('mask', o.mask, nX * nY);
  if (o.xAxis) requireLength('xAxis', o.xAxis, nX);
  if (o.yAxis) requireLength('yAxis', o.yAxis, nY);
  const nPix = nX * nY;
  const S2 = S * S;
  const w1 = 1 / S2;
  const { a, x0, y0 } = o.map;
  const a0 = a[0]!;
  const a1 = a[1]!;
  const a2 = a[2]!;
  const a3 = a[3]!;

  const cg = o.cartesian;
  const n = cg.n;
  const nCart = n * n;
  const invStep = 1 / cg.stepAu;
  const pMaxC = cg.pMaxAu;

  const pg = o.polar;
  const R = pg.radialBins;
  const M = pg.angularBins;
  const nPolar = R * M;
  const invDp = 1 / pg.dpAu;
  const invDth = M / (2 * Math.PI);

  const cart = new Growable(Math.max(16, nPix * 2));
  const pol = new Growable(Math.max(16, nPix * 2));
  const cartStart = new Int32Array(nPix + 1);
  const polStart = new Int32Array(nPix + 1);
  const sc = new Int32Array(S2);
  const sp = new Int32Array(S2);
  // sub-pixel offsets in pixels for unit pitch, scaled per pixel by the local pitch
  const offX = new Float64Array(S2);
  const offY = new Float64Array(S2);
  for (let j = 0; j < S; j++) {
    for (let i = 0; i < S; i++) {
      offX[j * S + i] = (i + 0.5) / S - 0.5;
      offY[j * S + i] = (j + 0.5) / S - 0.5;
    }
  }
  const mask = o.mask ?? null;
  const xAxis = o.xAxis ?? null;
  const yAxis = o.yAxis ?? null;
  let used = 0;
  for (let iy = 0; iy < nY; iy++) {
    const y = yAxis ? yAxis[iy]! : iy;
    const hy = pitch(yAxis, iy, nY);
    const uy = y - y0;
    for (let ix = 0; ix < nX; ix++) {
      const p = iy * nX + ix;
      cartStart[p] = cart.length;
      polStart[p] = pol.length;
      if (mask !== null && mask[p] === 0) continue;
      used++;
      const x = xAxis ? xAxis[ix]! : ix;
      const hx = xAxis ? pitch(xAxis, ix, nX) : 1;
      const ux = x - x0;
      // momentum of the pixel centre and of the unit sub-pixel steps
      const pcx = a0 * ux + a1 * uy;
      const pcy = a2 * ux + a3 * uy;
      for (let k = 0; k < S2; k++) {
        const dx = offX[k]! * hx;
        const dy = offY[k]! * hy;
        const px = pcx + a0 * dx + a1 * dy;
        const py = pcy + a2 * dx + a3 * dy;
        const jx = Math.floor((px + pMaxC) * invStep + 0.5);
        const jy = Math.floor((py + pMaxC) * invStep + 0.5);
        sc[k] = jx >= 0 && jx < n && jy >= 0 && jy < n ? jy * n + jx : nCart;
        const r2 = px * px + py * py;
        const ir = Math.floor(Math.sqrt(r2) * invDp);
        if (ir < R) {
          let it = Math.floor((Math.atan2(py, px) + Math.PI) * invDth);
          if (it >= M) it -= M;
          sp[k] = ir * M + it;
        } else {
          sp[k] = nPolar;
        }
      }
      pushRuns(cart, sc, S2, w1);
      pushRuns(pol, sp, S2, w1);
    }
  }
  cartStart[nPix] = cart.length;
  polStart[nPix] = pol.length;
  return {
    cartesian: cart.finish(nPix, nCart, cartStart),
    polar: pol.finish(nPix, nPolar, polStart),
    subsamples: S,
    usedPixels: used,
  };
}

/**
 * Kernel: accumulates pixel values through a map, out[bin] += v[pixel]·weight, out[nBins] collecting what falls off
 * the grid. Zero-valued pixels are skipped. Allocates nothing, validates nothing.
 *
 * @param map - pixel → bin map
 * @param values - pixel values (length map.nPixels), e.g. corrected counts
 * @param out - accumulator of length map.nBins + 1 (not cleared)
 * @returns out
 */
export function applyPixelBinMapKernel(map: PixelBinMap, values: ArrayLike<number>, out: Float64Array): Float64Array {
  const rs = map.rowStart;
  const bin = map.bin;
  const w = map.weight;
  const nP = map.nPixels;
  for (let p = 0; p < nP; p++) {
    const v = values[p]!;
    if (v === 0) continue;
    const e = rs[p + 1]!;
    for (let k = rs[p]!; k < e; k++) out[bin[k]!]! += v * w[k]!;
  }
  return out;
}

/**
 * Resamples one frame of pixel values through a map (public layer of {@link applyPixelBinMapKernel}).
 *
 * @param map - pixel → bin map
 * @param values - pixel values, n_y × n_x row-major
 * @param out - output of length nBins + 1 (cleared first; default new)
 * @returns `{ bins: out, offGrid: out[nBins] }`
 * @throws {RangeError} for wrong lengths
 */
export function resampleFrame(
  map: PixelBinMap,
  values: ArrayLike<number>,
  out: Float64Array = new Float64Array(map.nBins + 1),
): { bins: Float64Array; offGrid: number } {
  requireLength('values', values, map.nPixels);
  requireLength('out', out, map.nBins + 1);
  out.fill(0);
  applyPixelBinMapKernel(map, values, out);
  return { bins: out, offGrid: out[map.nBins]! };
}
