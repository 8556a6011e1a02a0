import { describe, expect, it } from 'vitest';
import { createPoissonTable, createPrng, logFactorial, samplePoissonTable } from '@/reduction/prng';
import { expectRel } from './helpers/close';

describe('xoshiro128** generator', () => {
  it('is deterministic for a seed and differs between seeds', () => {
    const a = createPrng(12345);
    const b = createPrng(12345);
    const c = createPrng(12346);
    const sa = Array.from({ length: 8 }, () => a.nextUint32());
    expect(Array.from({ length: 8 }, () => b.nextUint32())).toEqual(sa);
    expect(Array.from({ length: 8 }, () => c.nextUint32())).not.toEqual(sa);
    expect(sa.every((v) => Number.isInteger(v) && v >= 0 && v < 2 ** 32)).toBe(true);
  });
  it('uniforms lie in [0, 1) / (0, 1) with mean ½ and variance 1/12 [common practice]', () => {
    const g = createPrng(1);
    let s = 0;
    let s2 = 0;
    const n = 200_000;
    for (let i = 0; i < n; i++) {
      const u = i % 2 ? g.uniform() : g.uniform32();
      expect(u >= 0 && u < 1).toBe(true);
      s += u;
      s2 += u * u;
    }
    // σ(mean) = 0.29/√n = 6.5e-4: allow 5σ
    expect(Math.abs(s / n - 0.5)).toBeLessThan(3.3e-3);
    expect(Math.abs(s2 / n - (s / n) ** 2 - 1 / 12)).toBeLessThan(2e-3);
  });
  it('rejects a non-integer seed', () => {
    expect(() => createPrng(1.5)).toThrow(TypeError);
  });
});

describe('ln k!', () => {
  it('table and Stirling branch agree with direct sums to 1e-13 relative', () => {
    for (const k of [0, 1, 2, 10, 255, 256, 300, 1000]) {
      let s = 0;
      for (let i = 2; i <= k; i++) s += Math.log(i);
      if (k < 2) expect(logFactorial(k)).toBe(0);
      else expectRel(logFactorial(k), s, 1e-13, `k=${k}`);
    }
  });
});

/** Poisson pmf (exact recursion) for the χ² goodness-of-fit check. */
function pmf(mu: number, kMax: number): number[] {
  const p: number[] = [];
  for (let k = 0; k <= kMax; k++) p.push(Math.exp(-mu + k * Math.log(mu) - logFactorial(k)));
  return p;
}

describe('Poisson samplers (exact for all means)', () => {
  const means = [0.3, 4.5, 9.99, 10, 37.2, 99.5, 150, 2500];
  it.each(means)('μ = %f: mean, variance and χ² against the pmf, both samplers', (mu) => {
    const n = 60_000;
    const g = createPrng(Math.round(mu * 1000));
    const table = createPoissonTable(new Float64Array(n).fill(mu));
    const fromTable = samplePoissonTable(table, g, new Float64Array(n), null);
    for (const [name, draw] of [
      ['direct', (i: number) => (i >= 0 ? g.poisson(mu) : 0)],
      ['table', (i: number) => fromTable[i]!],
    ] as const) {
      let s = 0;
      let s2 = 0;
      const kMax = Math.ceil(mu + 12 * Math.sqrt(mu) + 20);
      const hist = new Float64Array(kMax + 1);
      for (let i = 0; i < n; i++) {
        const k = draw(i);
        expect(Number.isInteger(k) && k >= 0).toBe(true);
        s += k;
        s2 += k * k;
        hist[Math.min(k, kMax)]! += 1;
      }
      const m = s / n;
      const v = s2 / n - m * m;
      // 5σ bounds: σ(mean) = √(μ/n), σ(var) ≈ μ√(2/n) (plus the excess kurtosis term μ/n)
      expect(Math.abs(m - mu), `${name} mean`).toBeLessThan(5 * Math.sqrt(mu / n));
      expect(Math.abs(v - mu), `${name} variance`).toBeLessThan(5 * Math.sqrt((2 * mu * mu + mu) / n));
      // χ² with cells pooled to expected ≥ 20
      const p = pmf(mu, kMax);
      let chi2 = 0;
      let dof = -1;
      let eAcc = 0;
      let oAcc = 0;
      for (let k = 0; k <= kMax; k++) {
        eAcc += p[k]! * n;
        oAcc += hist[k]!;
        if (eAcc >= 20) {
          chi2 += (oAcc - eAcc) ** 2 / eAcc;
          dof++;
          eAcc = 0;
          oAcc = 0;
        }
      }
      // χ²/dof well below the 1e-4 tail for these dof (≤ ~200): mean dof, sd √(2dof)
      expect(chi2, `${name} χ² ${chi2} dof ${dof}`).toBeLessThan(dof + 6 * Math.sqrt(2 * dof) + 10);
    }
  });
  it('zero mean gives 0, negative means −Poisson(|μ|) in the table, invalid means throw', () => {
    const g = createPrng(3);
    expect(g.poisson(0)).toBe(0);
    expect(() => g.poisson(-1)).toThrow(RangeError);
    expect(() => g.poisson(Number.NaN)).toThrow(/NaN/);
    const out = samplePoissonTable(createPoissonTable([0, -5, Number.NaN]), g, new Float64Array(3), null);
    expect(out[0]).toBe(0);
    expect(out[1]!).toBeLessThanOrEqual(0);
    expect(Number.isNaN(out[2])).toBe(true);
  });
  it('the table kernel writes through the index map and keeps the generator state', () => {
    const g = createPrng(9);
    const out = new Float64Array(6).fill(-1);
    samplePoissonTable(createPoissonTable([3, 40]), g, out, Int32Array.of(4, 1));
    expect(out[0]).toBe(-1);
    expect(out[4]! >= 0 && out[1]! >= 0).toBe(true);
    const h = createPrng(9);
    samplePoissonTable(createPoissonTable([3, 40]), h, new Float64Array(2), null);
    expect(g.state()).toEqual(h.state());
  });
});
