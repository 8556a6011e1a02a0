/**
 * Lobe candidates from a smoothed angular distribution.
 *
 * - Seeded (simple-man directions known, or the lobes of the original data when bootstrapping): for each seed,
 *   the maximum of the smoothed distribution within ±180°/N of the seed (each lobe's own sector, so a lobe is always
 *   matched to its nearest seed).
 * - Unseeded: the N largest local maxima that are at least 180°/N apart, returned in increasing angle.
 *
 * The number of lobes N (FORMATS §3 `lobes`): `auto` = 2 for angular_streaking, 3 for bicircular, 1 for image and
 * two_color_phase; a number overrides it.
 */
import { wrapDeg } from './angles';
import type { ExperimentKind } from './formats';

// FUNCTIONS //

/**
 * Number of lobes to look for.
 *
 * @param kind - experiment kind
 * @param lobes - settings value (`auto` or 1 … 12)
 * @returns N
 */
export function lobeCount(kind: ExperimentKind, lobes: 'auto' | number): number {
  if (lobes !== 'auto') return lobes;
  if (kind === 'angular_streaking') return 2;
  if (kind === 'bicircular') return 3;
  return 1;
}

/**
 * Candidate lobe directions (bin centres of maxima).
 *
 * @param thetaDeg - bin centres, degrees
 * @param ySmooth - smoothed angular distribution
 * @param nLobes - N ≥ 1
 * @param seedsDeg - seed directions (one per lobe), or null
 * @returns candidate directions, degrees; fewer than N when the distribution has fewer maxima (unseeded case)
 */
export function findLobeCandidates(
  thetaDeg: ArrayLike<number>,
  ySmooth: ArrayLike<number>,
  nLobes: number,
  seedsDeg: readonly number[] | null,
): number[] {
  const M = thetaDeg.length;
  const half = 180 / nLobes;
  if (seedsDeg && seedsDeg.length > 0) {
    return seedsDeg.map((s) => {
      let best = -1;
      let bestV = Number.NEGATIVE_INFINITY;
      for (let j = 0; j < M; j++) {
        const d = wrapDeg(thetaDeg[j]! - s);
        if (d > -half && d <= half && ySmooth[j]! > bestV) {
          bestV = ySmooth[j]!;
          best = j;
        }
      }
      return best >= 0 ? thetaDeg[best]! : s;
    });
  }
  const order = Array.from({ length: M }, (_, j) => j).sort((a, b) => ySmooth[b]! - ySmooth[a]!);
  const out: number[] = [];
  for (const j of order) {
    if (out.length >= nLobes) break;
    const v = ySmooth[j]!;
    const l = ySmooth[(j - 1 + M) % M]!;
    const r = ySmooth[(j + 1) % M]!;
    if (v < l || v < r) continue;
    const t = thetaDeg[j]!;
    if (out.some((o) => Math.abs(wrapDeg(o - t)) < half)) continue;
    out.push(t);
  }
  return out.sort((a, b) => a - b);
}
