/**
 * Series styles of the campaign trend: colours are the Okabe–Ito colour-blind-safe set (Okabe & Ito 2008, "Color
 * Universal Design"; the RGB triplets below are the published ones, written here from memory: black 0/0/0, orange
 * 230/159/0, sky blue 86/180/233, bluish green 0/158/115, blue 0/114/178, vermillion 213/94/0, reddish purple
 * 204/121/167; the set's yellow 240/228/66 is left out on purpose), and no two of the first 35 series share both
 * colour and marker shape (7 colours × 5 shapes, coprime: Chinese remainder theorem).
 */
import { describe, expect, it } from 'vitest';
import {
  DISTINCT_SERIES_STYLES,
  MARKER_SHAPES,
  markerPath,
  OKABE_ITO,
  seriesStyle,
} from '@/components/plots/series-styles';

const PUBLISHED: [number, number, number][] = [
  [0, 0, 0],
  [230, 159, 0],
  [86, 180, 233],
  [0, 158, 115],
  [0, 114, 178],
  [213, 94, 0],
  [204, 121, 167],
];

const rgb = (hex: string) => [1, 3, 5].map((i) => Number.parseInt(hex.slice(i, i + 2), 16));

describe('series styles', () => {
  it('uses exactly the published Okabe–Ito colours (without the yellow)', () => {
    expect(OKABE_ITO.map((c) => rgb(c.hex))).toEqual(PUBLISHED);
  });
  it('gives the first 35 series 35 different colour–shape pairs', () => {
    expect(DISTINCT_SERIES_STYLES).toBe(35);
    const pairs = new Set<string>();
    for (let i = 0; i < DISTINCT_SERIES_STYLES; i++) {
      const s = seriesStyle(i);
      pairs.add(`${s.color}|${s.shape}`);
    }
    expect(pairs.size).toBe(35);
  });
  it('never gives two neighbouring series the same colour or the same shape', () => {
    for (let i = 0; i + 1 < 40; i++) {
      expect(seriesStyle(i).color).not.toBe(seriesStyle(i + 1).color);
      expect(seriesStyle(i).shape).not.toBe(seriesStyle(i + 1).shape);
    }
  });
  it('draws every shape as one closed path around its centre', () => {
    for (const shape of MARKER_SHAPES) {
      const d = markerPath(shape, 10, 20, 3);
      expect(d.startsWith('M')).toBe(true);
      expect(d.endsWith('Z')).toBe(true);
      const nums = (d.match(/-?\d+(\.\d+)?/g) ?? []).map(Number);
      // every coordinate stays within 1.3 × r (+ the arc flags 0/1) of the centre
      expect(Math.max(...nums)).toBeLessThanOrEqual(20 + 3 * 1.3 + 1e-9);
    }
  });
});
