/**
 * The log axis of the plots: a base-10 logarithmic scale (equal distance per decade, common practice for log axes),
 * its ticks (decades, with 2 and 5 between them over three decades or fewer) and the positive extent. The expected
 * positions are computed with Math.log10 directly, independent of the scale's code.
 */
import { describe, expect, it } from 'vitest';
import { logScale, logTicks, positiveExtent } from '@/components/plots/scales';

describe('logScale', () => {
  const s = logScale([1e13, 1e15], [0, 200]);
  it('puts every decade the same distance apart', () => {
    expect(s(1e13)).toBeCloseTo(0, 9);
    expect(s(1e14)).toBeCloseTo(100, 9);
    expect(s(1e15)).toBeCloseTo(200, 9);
    expect(s(3e14)).toBeCloseTo(100 + 100 * Math.log10(3), 9);
  });
  it('inverts', () => {
    expect(s.invert(s(4.2e14)) / 4.2e14).toBeCloseTo(1, 12);
  });
  it('has no place for zero or negative values', () => {
    expect(s(0)).toBeNaN();
    expect(s(-1)).toBeNaN();
  });
});

describe('logTicks', () => {
  it('gives 1, 2, 5 per decade over a short range', () => {
    expect(logTicks(1, 100)).toEqual([1, 2, 5, 10, 20, 50, 100]);
  });
  it('gives decades only over a long range', () => {
    expect(logTicks(1e-3, 1e3)).toEqual([1e-3, 1e-2, 1e-1, 1, 10, 100, 1000]);
  });
  it('returns nothing for a domain that is not positive', () => {
    expect(logTicks(0, 10)).toEqual([]);
  });
});

describe('positiveExtent', () => {
  it('ignores zero, negative and non-finite values', () => {
    expect(positiveExtent([-3, 0, Number.NaN])).toBeNull();
    const e = positiveExtent([-1, 0, 2e14, 6e14]) as [number, number];
    expect(e).toEqual([1e14, 1e15]);
  });
  it('pads a range of several decades by 5 % of its log span on each side', () => {
    const [lo, hi] = positiveExtent([1, 1e4]) as [number, number];
    expect(Math.log10(lo)).toBeCloseTo(-0.2, 12);
    expect(Math.log10(hi)).toBeCloseTo(4.2, 12);
  });
});
