/**
 * Shared shapes of the calibration-bench tools (issue 15, SCIENCE.md §7.1–§7.5). Every tool is pure TypeScript on
 * typed arrays, so it runs in a browser web worker and on the server alike; every tool returns its values, their
 * standard errors, a residual, diagnostics and plain-sentence warnings, so the page can show all of it before the
 * analyst accepts the result.
 */

// TYPES //

/** One raw detector frame, row-major [iy][ix] (x = column, y = row), counts per pixel. */
export interface BenchFrame {
  /** Columns. */
  nX: number;
  /** Rows. */
  nY: number;
  /** n_y × n_x counts, row-major. */
  counts: ArrayLike<number>;
  /** Optional validity mask of the same layout (1 = use, 0 = excluded, e.g. bad pixels). */
  mask?: ArrayLike<number> | null;
  /**
   * Optional counting variance per pixel, same layout. Needed when `counts` are not raw counts (a subtracted
   * background, a flat field): then |counts| understates the noise. The centre finder uses it when given.
   */
  variance?: ArrayLike<number> | null;
}

/** The common envelope of a tool's answer. */
export interface BenchToolResult<V, E, R, D> {
  /** Fitted values. */
  value: V;
  /** One-standard-deviation errors of the values (same keys). */
  stdErr: E;
  /** What is left over: a residual image, a residual curve, or an rms. */
  residual: R;
  /** Numbers that say how the fit went (iterations, χ², points used …). */
  diagnostics: D;
  /** Plain sentences the page shows beside the result. */
  warnings: string[];
}

// FUNCTIONS //

/**
 * Checks a frame's shape and values (public layer of the tools).
 *
 * @param frame - the frame
 * @throws {RangeError} for a bad shape, a mask of the wrong length or a non-finite count (naming the pixel)
 */
export function requireFrame(frame: BenchFrame): void {
  const { nX, nY, counts } = frame;
  if (!(Number.isInteger(nX) && nX >= 3 && Number.isInteger(nY) && nY >= 3)) {
    throw new RangeError(`the frame must be at least 3 × 3 pixels, got ${nX} × ${nY}`);
  }
  if (counts.length !== nX * nY) {
    throw new RangeError(`the frame must hold n_x·n_y = ${nX * nY} counts, got ${counts.length}`);
  }
  if (frame.mask && frame.mask.length !== nX * nY) {
    throw new RangeError(`the mask must hold ${nX * nY} values, got ${frame.mask.length}`);
  }
  for (let i = 0; i < counts.length; i++) {
    if (!Number.isFinite(counts[i]!)) {
      throw new RangeError(`count at pixel (x ${i % nX}, y ${Math.floor(i / nX)}) is not a finite number`);
    }
  }
}

/**
 * Bilinear sample of a frame at (x, y) (pixel-centre coordinates), with the weights of the four pixels used.
 *
 * @param frame - frame
 * @param x - column coordinate
 * @param y - row coordinate
 * @param out - receives the value and its Poisson variance Σ w_i² |I_i|
 * @returns false (out untouched) outside the frame or next to a masked pixel
 */
export function bilinear(frame: BenchFrame, x: number, y: number, out: { value: number; variance: number }): boolean {
  const { nX, nY, counts, mask } = frame;
  if (!(x >= 0 && y >= 0 && x <= nX - 1 && y <= nY - 1)) return false;
  let ix = Math.floor(x);
  let iy = Math.floor(y);
  if (ix === nX - 1) ix--;
  if (iy === nY - 1) iy--;
  const fx = x - ix;
  const fy = y - iy;
  const i00 = iy * nX + ix;
  const i10 = i00 + 1;
  const i01 = i00 + nX;
  const i11 = i01 + 1;
  if (mask && !(mask[i00] && mask[i10] && mask[i01] && mask[i11])) return false;
  const w00 = (1 - fx) * (1 - fy);
  const w10 = fx * (1 - fy);
  const w01 = (1 - fx) * fy;
  const w11 = fx * fy;
  const c00 = counts[i00]!;
  const c10 = counts[i10]!;
  const c01 = counts[i01]!;
  const c11 = counts[i11]!;
  out.value = w00 * c00 + w10 * c10 + w01 * c01 + w11 * c11;
  out.variance =
    w00 * w00 * Math.abs(c00) + w10 * w10 * Math.abs(c10) + w01 * w01 * Math.abs(c01) + w11 * w11 * Math.abs(c11);
  return true;
}

/**
 * Symmetric 2×2 inverse with the determinant; null when singular.
 *
 * @param h - row-major [h00, h01, h10, h11]
 */
export function inverse2(h: ArrayLike<number>): Float64Array | null {
  const det = h[0]! * h[3]! - h[1]! * h[2]!;
  if (!(Math.abs(det) > 0) || !Number.isFinite(det)) return null;
  return Float64Array.of(h[3]! / det, -h[1]! / det, -h[2]! / det, h[0]! / det);
}

/** Taps of one interpolated sample: pixel indices, weights, and the weights of ∂/∂x and ∂/∂y. */
export interface Stencil {
  /** Number of taps used (4 bilinear, 16 bicubic). */
  n: number;
  index: Int32Array;
  weight: Float64Array;
  /** Weights of the sample's derivative along x and y (per pixel). */
  dx: Float64Array;
  dy: Float64Array;
  /** Weights of its second derivatives ∂²/∂x², ∂²/∂x∂y, ∂²/∂y² (per pixel²; bilinear: ∂²/∂x² = ∂²/∂y² = 0). */
  dxx: Float64Array;
  dxy: Float64Array;
  dyy: Float64Array;
}

/** A stencil with room for 16 taps. */
export function newStencil(): Stencil {
  return {
    n: 0,
    index: new Int32Array(16),
    weight: new Float64Array(16),
    dx: new Float64Array(16),
    dy: new Float64Array(16),
    dxx: new Float64Array(16),
    dxy: new Float64Array(16),
    dyy: new Float64Array(16),
  };
}

/** Catmull–Rom weights of the samples at −1, 0, 1, 2 for a phase t ∈ [0, 1], and of their two derivatives. */
function catmullRom(t: number, w: Float64Array, d: Float64Array, d2: Float64Array): void {
  const t2 = t * t;
  const t3 = t2 * t;
  w[0] = 0.5 * (-t3 + 2 * t2 - t);
  w[1] = 0.5 * (3 * t3 - 5 * t2 + 2);
  w[2] = 0.5 * (-3 * t3 + 4 * t2 + t);
  w[3] = 0.5 * (t3 - t2);
  d[0] = 0.5 * (-3 * t2 + 4 * t - 1);
  d[1] = 0.5 * (9 * t2 - 10 * t);
  d[2] = 0.5 * (-9 * t2 + 8 * t + 1);
  d[3] = 0.5 * (3 * t2 - 2 * t);
  d2[0] = -3 * t + 2;
  d2[1] = 9 * t - 5;
  d2[2] = -9 * t + 4;
  d2[3] = 3 * t - 1;
}

const CR = {
  wx: new Float64Array(4),
  dx: new Float64Array(4),
  d2x: new Float64Array(4),
  wy: new Float64Array(4),
  dy: new Float64Array(4),
  d2y: new Float64Array(4),
};

/**
 * The interpolation stencil at (x, y) (pixel-centre coordinates): bilinear (order 1, 2 × 2 taps) or Catmull–Rom
 * bicubic (order 3, 4 × 4 taps; interpolating, exact for quadratics, continuous first derivative) [common practice:
 * E. Catmull, R. Rom 1974; the cubic convolution kernel with a = −½ of R. Keys, IEEE Trans. ASSP 29, 1153 (1981)].
 *
 * @param frame - frame (only its shape and mask are read)
 * @param x - column coordinate
 * @param y - row coordinate
 * @param order - 1 or 3
 * @param out - receives the taps
 * @returns false (out untouched) when a tap falls outside the frame or on a masked pixel
 */
export function interpolationStencil(frame: BenchFrame, x: number, y: number, order: 1 | 3, out: Stencil): boolean {
  const { nX, nY, mask } = frame;
  if (!(x >= 0 && y >= 0 && x <= nX - 1 && y <= nY - 1)) return false;
  let ix = Math.floor(x);
  let iy = Math.floor(y);
  if (ix === nX - 1) ix--;
  if (iy === nY - 1) iy--;
  const fx = x - ix;
  const fy = y - iy;
  if (order === 1) {
    const i00 = iy * nX + ix;
    const idx = [i00, i00 + 1, i00 + nX, i00 + nX + 1];
    if (mask && !(mask[idx[0]!] && mask[idx[1]!] && mask[idx[2]!] && mask[idx[3]!])) return false;
    out.n = 4;
    out.index.set(idx);
    out.weight[0] = (1 - fx) * (1 - fy);
    out.weight[1] = fx * (1 - fy);
    out.weight[2] = (1 - fx) * fy;
    out.weight[3] = fx * fy;
    out.dx[0] = -(1 - fy);
    out.dx[1] = 1 - fy;
    out.dx[2] = -fy;
    out.dx[3] = fy;
    out.dy[0] = -(1 - fx);
    out.dy[1] = -fx;
    out.dy[2] = 1 - fx;
    out.dy[3] = fx;
    out.dxx.fill(0, 0, 4);
    out.dyy.fill(0, 0, 4);
    out.dxy[0] = 1;
    out.dxy[1] = -1;
    out.dxy[2] = -1;
    out.dxy[3] = 1;
    return true;
  }
  if (ix < 1 || iy < 1 || ix + 2 > nX - 1 || iy + 2 > nY - 1) return false;
  catmullRom(fx, CR.wx, CR.dx, CR.d2x);
  catmullRom(fy, CR.wy, CR.dy, CR.d2y);
  let k = 0;
  for (let j = 0; j < 4; j++) {
    const row = (iy - 1 + j) * nX + ix - 1;
    for (let i = 0; i < 4; i++) {
      const p = row + i;
      if (mask && !mask[p]) return false;
      out.index[k] = p;
      out.weight[k] = CR.wx[i]! * CR.wy[j]!;
      out.dx[k] = CR.dx[i]! * CR.wy[j]!;
      out.dy[k] = CR.wx[i]! * CR.dy[j]!;
      out.dxx[k] = CR.d2x[i]! * CR.wy[j]!;
      out.dxy[k] = CR.dx[i]! * CR.dy[j]!;
      out.dyy[k] = CR.wx[i]! * CR.d2y[j]!;
      k++;
    }
  }
  out.n = 16;
  return true;
}
