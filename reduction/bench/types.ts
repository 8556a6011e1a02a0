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
