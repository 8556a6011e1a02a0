/**
 * Detector-ellipticity stretch matrix (SCIENCE.md §7.3, [common practice]): M = R(ψ) diag(q, 1) R(−ψ), a stretch
 * by q along the direction ψ (degrees, counter-clockwise from +x). The detector model is
 * r_det − r_c = s R(β) M p; the calibration of FORMATS §2 undoes it with M⁻¹ = R(ψ) diag(1/q, 1) R(−ψ)
 * (`detector_ellipticity.ratio` = q, `axis_deg` = ψ).
 */

// FUNCTIONS //

/**
 * Stretch matrix M (row-major 2×2).
 *
 * @param q - stretch ratio (> 0)
 * @param psiDeg - stretch direction ψ, degrees
 * @returns [m00, m01, m10, m11]
 * @throws {RangeError} for q ≤ 0
 * @example
 * ellipseMatrix(1.05, 30); // returns ≈ [1.0375, 0.021651, 0.021651, 1.0125] (SCIENCE.md §7.3)
 */
export function ellipseMatrix(q: number, psiDeg: number): Float64Array {
  if (!(q > 0) || !Number.isFinite(q)) throw new RangeError(`stretch ratio q must be > 0, got ${q}`);
  if (!Number.isFinite(psiDeg)) throw new RangeError(`psiDeg must be finite, got ${psiDeg}`);
  const r = (psiDeg * Math.PI) / 180;
  const c = Math.cos(r);
  const s = Math.sin(r);
  // R(ψ) diag(q,1) R(−ψ) = [[q c² + s², (q − 1) c s], [(q − 1) c s, q s² + c²]]
  return Float64Array.of(q * c * c + s * s, (q - 1) * c * s, (q - 1) * c * s, q * s * s + c * c);
}

/**
 * Inverse of a 2×2 matrix.
 *
 * @param m - row-major [m00, m01, m10, m11]
 * @returns inverse
 * @throws {RangeError} when singular
 */
export function invert2x2(m: ArrayLike<number>): Float64Array {
  const det = m[0]! * m[3]! - m[1]! * m[2]!;
  if (det === 0 || !Number.isFinite(det)) throw new RangeError(`matrix is singular (det = ${det})`);
  return Float64Array.of(m[3]! / det, -m[1]! / det, -m[2]! / det, m[0]! / det);
}
