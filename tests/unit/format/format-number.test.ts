// lib/format.ts formatNumber: people read powers of ten as 2×10¹⁴, never as the programming notation 2e14.
// Source for the notation: the SI Brochure (BIPM, 9th edition 2019, §5.4.4: numbers are written with "× 10^n");
// the superscript digits are Unicode U+2070–U+2079 and U+207B (from memory, common practice).
import { describe, expect, it } from 'vitest';
import { formatNumber as axisNumber } from '@/components/plots/scales';
import { formatNumber } from '@/lib/format';

describe('formatNumber', () => {
  it('writes large and small values with a real power of ten', () => {
    expect(formatNumber(2e14)).toBe('2×10¹⁴');
    expect(formatNumber(2.5e14)).toBe('2.5×10¹⁴');
    expect(formatNumber(1e14)).toBe('1×10¹⁴');
    expect(formatNumber(3.456e-5, 3)).toBe('3.46×10⁻⁵');
    expect(formatNumber(-1.2e6)).toBe('-1.2×10⁶');
  });

  it('keeps ordinary values plain, with the asked significant digits', () => {
    expect(formatNumber(0.0123)).toBe('0.0123');
    expect(formatNumber(1250, 6)).toBe('1250');
    expect(formatNumber(7.9134, 3)).toBe('7.91');
    expect(formatNumber(0)).toBe('0');
    expect(formatNumber(Number.NaN)).toBe('—');
    expect(formatNumber(null)).toBe('—');
  });

  it('is the one formatter: the plots use the same function', () => {
    expect(axisNumber).toBe(formatNumber);
    expect(axisNumber(4e14)).not.toMatch(/e/);
  });
});
