/**
 * Regions of the lab momentum plane for yield-versus-phase curves (settings extension `phase.regions`):
 * rectangle [px_min, px_max) × [py_min, py_max), polygon (even–odd rule), annular sector p ∈ [p_min, p_max) and
 * θ from theta_deg[0] counter-clockwise to theta_deg[1]. A Cartesian grid cell belongs to a region when its centre
 * does. Default regions: `all` (every cell), `px_positive` (px > 0), `px_negative` (px < 0).
 */
import { wrapPositive } from './angles';
import type { PhaseRegion } from './formats';
import type { CartesianGrid } from './grids';

// VARIABLES //

export const DEFAULT_PHASE_REGIONS: PhaseRegion[] = [
  { name: 'all', shape: 'rectangle', px_au: [-1e9, 1e9], py_au: [-1e9, 1e9] },
  { name: 'px_positive', shape: 'rectangle', px_au: [1e-12, 1e9], py_au: [-1e9, 1e9] },
  { name: 'px_negative', shape: 'rectangle', px_au: [-1e9, -1e-12], py_au: [-1e9, 1e9] },
];

// FUNCTIONS //

/**
 * Whether the point (px, py) (a.u.) lies in the region.
 *
 * @param r - region
 * @param px - a.u.
 * @param py - a.u.
 */
export function regionContains(r: PhaseRegion, px: number, py: number): boolean {
  if (r.shape === 'rectangle') return px >= r.px_au[0] && px < r.px_au[1] && py >= r.py_au[0] && py < r.py_au[1];
  if (r.shape === 'polygon') {
    const v = r.vertices_au;
    let inside = false;
    for (let i = 0, j = v.length - 1; i < v.length; j = i++) {
      const [xi, yi] = v[i]!;
      const [xj, yj] = v[j]!;
      if (yi > py !== yj > py && px < ((xj - xi) * (py - yi)) / (yj - yi) + xi) inside = !inside;
    }
    return inside;
  }
  const p = Math.hypot(px, py);
  if (p < r.p_au[0] || p >= r.p_au[1]) return false;
  const th = (Math.atan2(py, px) * 180) / Math.PI;
  const span = wrapPositive(r.theta_deg[1] - r.theta_deg[0]);
  const rel = wrapPositive(th - r.theta_deg[0]);
  return span === 0 ? true : rel <= span;
}

/**
 * Indices of the grid cells ([py][px] row-major) inside a region.
 *
 * @param r - region
 * @param grid - Cartesian grid
 * @returns cell indices
 */
export function regionCells(r: PhaseRegion, grid: CartesianGrid): Int32Array {
  const out: number[] = [];
  const c = grid.centresAu;
  for (let iy = 0; iy < grid.n; iy++) {
    for (let ix = 0; ix < grid.n; ix++) if (regionContains(r, c[ix]!, c[iy]!)) out.push(iy * grid.n + ix);
  }
  return Int32Array.from(out);
}

/**
 * Kernel: sum of image values over the listed cells.
 *
 * @param cells - cell indices
 * @param image - image
 * @returns Σ image[cells]
 */
export function sumCells(cells: Int32Array, image: ArrayLike<number>): number {
  let s = 0;
  for (let k = 0; k < cells.length; k++) s += image[cells[k]!]!;
  return s;
}
