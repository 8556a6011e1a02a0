// The colour maps of the momentum images and phase maps, as 256-entry lookup tables.
//
// `YlGnBu` (sequential, counts and yields): the ColorBrewer scheme "YlGnBu" by Cynthia A. Brewer (colorbrewer2.org;
// Harrower & Brewer, The Cartographic Journal 40(1), 27–37, 2003), sampled through `interpolateYlGnBu` of the
// d3-scale-chromatic package (the same scheme under its published name). Pale yellow is few counts, deep blue is
// many; lightness falls monotonically, so the order survives greyscale printing, and ColorBrewer lists the scheme
// as colour-blind safe.
// `phaseCircle` (cyclic, phase of maximum yield): Lobeline's own. A circle of constant lightness and chroma in
// CIE L*C*h (CIELAB, D65), L* = 64 and C* = 30, hue starting at 20° and going once round, built with d3-color's
// `hcl`. Every phase is equally light, so no phase looks more important than another, and 0 meets 2π without a
// seam. (Constant-lightness hue circles are a textbook construction; the numbers are ours.)
import { hcl, rgb } from 'd3-color';
import { interpolateYlGnBu } from 'd3-scale-chromatic';

export interface ColorMap {
  /** The published or our own name, shown in tooltips and documentation. */
  name: string;
  cyclic: boolean;
  /** 256 entries of [r, g, b] 0…255. */
  lut: Uint8ClampedArray;
}

/** Lightness, chroma and start hue of the phase circle. */
export const PHASE_CIRCLE = { lightness: 64, chroma: 30, startHueDeg: 20 } as const;

function lutFrom(colorAtT: (t: number) => string, cyclic: boolean): Uint8ClampedArray {
  const lut = new Uint8ClampedArray(256 * 3);
  for (let i = 0; i < 256; i++) {
    // A cyclic table covers [0, 1) so that entry 255 is one step before entry 0 (which is t = 1 again).
    const c = rgb(colorAtT(cyclic ? i / 256 : i / 255));
    lut[i * 3] = Math.round(c.r);
    lut[i * 3 + 1] = Math.round(c.g);
    lut[i * 3 + 2] = Math.round(c.b);
  }
  return lut;
}

export const ylGnBu: ColorMap = { name: 'YlGnBu (ColorBrewer)', cyclic: false, lut: lutFrom(interpolateYlGnBu, false) };

export const phaseCircle: ColorMap = {
  name: 'Lobeline phase circle',
  cyclic: true,
  lut: lutFrom(
    (t) => hcl(PHASE_CIRCLE.startHueDeg + 360 * t, PHASE_CIRCLE.chroma, PHASE_CIRCLE.lightness).formatRgb(),
    true,
  ),
};

/** Former export names, kept so existing imports keep working. */
export const tidepool = ylGnBu;
export const compass = phaseCircle;

/** Colour of t ∈ [0, 1] (wrapped for a cyclic map, clamped otherwise) as `rgb(r g b)`. */
export function colorAt(map: ColorMap, t: number): string {
  const u = map.cyclic ? ((t % 1) + 1) % 1 : Math.min(1, Math.max(0, t));
  const i = (map.cyclic ? Math.floor(u * 256) % 256 : Math.round(u * 255)) * 3;
  return `rgb(${map.lut[i]} ${map.lut[i + 1]} ${map.lut[i + 2]})`;
}

/** CSS linear-gradient of a map (for colour bars), bottom to top when `vertical`. */
export function cssGradient(map: ColorMap, vertical = true): string {
  const stops: string[] = [];
  for (let i = 0; i <= 16; i++) stops.push(`${colorAt(map, i / 16)} ${(i / 16) * 100}%`);
  return `linear-gradient(${vertical ? 'to top' : 'to right'}, ${stops.join(', ')})`;
}
