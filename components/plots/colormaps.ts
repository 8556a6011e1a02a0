// Lobeline's own colour maps (control points chosen here, interpolated linearly in sRGB between them).
//
// `tidepool` (sequential): night slate → deep blue → teal → moss → ochre → cream. CIE L* of the control points rises
// monotonically: 6, 18, 32, 46, 58, 66, 77, 91, 97 (computed with the sRGB → CIELAB formulas of IEC 61966-2-1 and
// CIE 15), so brighter always means more counts, also in greyscale print.
// `compass` (cyclic, for the phase of maximum yield): a closed hue loop rose → amber → olive → green → cyan → blue →
// violet → magenta → rose with L* held between 55 and 60, so no phase looks brighter than another and 0 meets 2π
// without a seam.
export interface ColorMap {
  name: string;
  cyclic: boolean;
  /** 256 entries of [r, g, b] 0…255. */
  lut: Uint8ClampedArray;
}

const TIDEPOOL = ['#0d1420', '#1d2a4e', '#25506b', '#1f7a78', '#5a9a62', '#b0a24a', '#e6b867', '#f8e2b4', '#fdf7ea'];
const COMPASS = ['#d0606a', '#c07f3a', '#98923a', '#5e9a63', '#3a97a0', '#5b86cf', '#9275cc', '#c266a8', '#d0606a'];

function hex(c: string): [number, number, number] {
  const h = c.replace('#', '');
  return [Number.parseInt(h.slice(0, 2), 16), Number.parseInt(h.slice(2, 4), 16), Number.parseInt(h.slice(4, 6), 16)];
}

function buildLut(points: string[]): Uint8ClampedArray {
  const rgb = points.map(hex);
  const lut = new Uint8ClampedArray(256 * 3);
  const segments = rgb.length - 1;
  for (let i = 0; i < 256; i++) {
    const t = (i / 255) * segments;
    const k = Math.min(segments - 1, Math.floor(t));
    const f = t - k;
    const a = rgb[k] as [number, number, number];
    const b = rgb[k + 1] as [number, number, number];
    for (let c = 0; c < 3; c++) lut[i * 3 + c] = Math.round(a[c]! + (b[c]! - a[c]!) * f);
  }
  return lut;
}

export const tidepool: ColorMap = { name: 'tidepool', cyclic: false, lut: buildLut(TIDEPOOL) };
export const compass: ColorMap = { name: 'compass', cyclic: true, lut: buildLut(COMPASS) };

/** Colour of t ∈ [0, 1] (wrapped for a cyclic map, clamped otherwise) as `rgb(r g b)`. */
export function colorAt(map: ColorMap, t: number): string {
  const u = map.cyclic ? ((t % 1) + 1) % 1 : Math.min(1, Math.max(0, t));
  const i = Math.round(u * 255) * 3;
  return `rgb(${map.lut[i]} ${map.lut[i + 1]} ${map.lut[i + 2]})`;
}

/** CSS linear-gradient of a map (for colour bars), bottom to top when `vertical`. */
export function cssGradient(map: ColorMap, vertical = true): string {
  const stops: string[] = [];
  for (let i = 0; i <= 16; i++) stops.push(`${colorAt(map, i / 16)} ${(i / 16) * 100}%`);
  return `linear-gradient(${vertical ? 'to top' : 'to right'}, ${stops.join(', ')})`;
}
