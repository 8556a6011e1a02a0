// Tick labels of the comparison figures: digits follow the tick spacing (worked by hand), powers of ten for large
// values (the shared formatNumber of lib/format.ts).
import { describe, expect, it } from 'vitest';
import { tickFormat } from '@/components/comparison/ticks';

describe('tick labels', () => {
  it('a spacing of 0.002 gets three decimals, so neighbouring ticks differ', () => {
    const f = tickFormat([0.996, 0.998, 1, 1.002], false);
    expect([0.996, 0.998, 1, 1.002].map(f)).toEqual(['0.996', '0.998', '1.000', '1.002']);
  });
  it('whole degrees stay whole; a zero tick is 0, not -0.0', () => {
    expect([4, 6, 8].map(tickFormat([4, 6, 8], false))).toEqual(['4', '6', '8']);
    expect(tickFormat([-0.5, 0, 0.5], false)(1e-17)).toBe('0.0');
  });
  it('intensities are written as powers of ten', () => {
    expect(tickFormat([2e14, 3e14], false)(2e14)).toBe('2×10¹⁴');
    expect(tickFormat([1e14, 1e15], true)(1e15)).toBe('1×10¹⁵');
  });
});
