import { describe, expect, it } from 'vitest';
import {
  abelForwardOnion,
  abelInvertImageOnion,
  abelInvertOnion,
  onionInverseKernel,
  onionWeight,
} from '@/reduction/abel';
import { expectClose } from './helpers/close';

describe('Dasch (1992) onion peeling, discrete test of SCIENCE.md §8.4 [derived]', () => {
  const f = Float64Array.from({ length: 40 }, (_, j) => (j <= 29 ? 1 : 0));
  const P = abelForwardOnion(f, 1);
  it('P_i = 2√(29.5² − i²): P0 = 59, P10 = 55.506 756, P29 = 10.816 654', () => {
    expectClose(P[0]!, 59, 1e-12, 'P0');
    expectClose(P[10]!, 55.506756, 5e-7, 'P10');
    expectClose(P[29]!, 10.816654, 5e-7, 'P29');
    for (let i = 0; i < 30; i++) expectClose(P[i]!, 2 * Math.sqrt(29.5 ** 2 - i * i), 1e-11, `P${i}`);
    expect(P[35]).toBe(0);
  });
  it('back-substitution returns f to 1e-12', () => {
    const back = abelInvertOnion(P, 1);
    for (let j = 0; j < 40; j++) expectClose(back[j]!, f[j]!, 1e-12, `f${j}`);
  });
  it('weights: W_ii = √((2i+1)² − 4i²), zero below the diagonal', () => {
    expect(onionWeight(0, 0)).toBe(1);
    expect(onionWeight(3, 3)).toBe(Math.sqrt(49 - 36));
    expect(onionWeight(4, 2)).toBe(0);
  });
  it('kernel with negative stride reads a half-row outward from the axis; N ≤ 0 does nothing', () => {
    //                idx: 0    1    2 (axis)
    const row = Float64Array.of(P[2]!, P[1]!, P[0]!);
    const out = new Float64Array(3);
    onionInverseKernel(3, row, -1, 2, 1, out, 1, 0);
    // three rings only: the truncated problem is still solved exactly for its own forward model
    const fwd = abelForwardOnion(out, 1);
    for (let i = 0; i < 3; i++) expectClose(fwd[i]!, P[i]!, 1e-12, `fwd ${i}`);
    const o2 = Float64Array.of(7);
    onionInverseKernel(0, row, 1, 0, 1, o2, 1, 0);
    expect(o2[0]).toBe(7);
    expect(() => abelInvertOnion([1], 0)).toThrow(/dr/);
  });
});

describe('analytic Gaussian Abel pair (SCIENCE.md §8.4) [derived]', () => {
  it('P(x) = √π σ e^{−x²/σ²}: check values for σ = 1.3', () => {
    const proj = (x: number) => Math.sqrt(Math.PI) * 1.3 * Math.exp(-(x * x) / 1.69);
    expectClose(proj(0), 2.304190006, 5e-10, 'P(0)');
    expectClose(proj(0.7), 1.724243458, 5e-10, 'P(0.7)');
    expectClose(proj(2), 0.216073922, 5e-10, 'P(2)');
  });
  it('onion peeling of the sampled projection recovers e^{−ρ²/σ²}', () => {
    const dr = 0.01;
    const N = 800;
    const P = Float64Array.from({ length: N }, (_, i) => Math.sqrt(Math.PI) * 1.3 * Math.exp(-((i * dr) ** 2) / 1.69));
    const f = abelInvertOnion(P, dr);
    // onion peeling assumes piecewise-constant rings: O(Δr²) error away from the axis; 2e-3 at Δr = σ/130
    for (const rho of [0.2, 0.7, 1.3, 2.0]) {
      const i = Math.round(rho / dr);
      expectClose(f[i]!, Math.exp(-(rho * rho) / 1.69), 2e-3, `ρ=${rho}`);
    }
  });
  it('image inversion row by row about the axis, both halves', () => {
    const nX = 201;
    const nY = 3;
    const img = new Float64Array(nX * nY);
    for (let y = 0; y < nY; y++) {
      for (let x = 0; x < nX; x++)
        img[y * nX + x] = (y + 1) * Math.sqrt(Math.PI) * 30 * Math.exp(-(((x - 100) / 30) ** 2));
    }
    const f = abelInvertImageOnion(img, nX, nY, 100, 1);
    for (const y of [0, 2]) {
      for (const dx of [0, 20, -20, 45]) {
        expectClose(f[y * nX + 100 + dx]! / (y + 1), Math.exp(-((dx / 30) ** 2)), 3e-3, `y=${y} dx=${dx}`);
      }
    }
    expect(() => abelInvertImageOnion(img, nX, nY, 201, 1)).toThrow(/axisX/);
  });
});
