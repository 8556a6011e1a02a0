import { describe, expect, it } from 'vitest';
import { analysisSettingsSchema } from '@/reduction/formats';
import { polarGrid } from '@/reduction/grids';
import {
  angularDistribution,
  autoRadialWindow,
  energySpectrum,
  radialSpectrum,
  radialWindowWeights,
  sectorDensityKernel,
} from '@/reduction/spectra';
import { expectClose } from './helpers/close';

const g = polarGrid(
  analysisSettingsSchema.parse({ grid: { p_max_au: 2, n: 401 }, radial_bins: 200, angular_bins: 360 }),
);

/** Histogram of a uniform area density ρ: counts = ρ·p·Δp·Δθ exactly. */
function uniformDensity(rho: number): Float64Array {
  const H = new Float64Array(200 * 360);
  const dth = (g.dthetaDeg * Math.PI) / 180;
  for (let i = 0; i < 200; i++) for (let j = 0; j < 360; j++) H[i * 360 + j] = rho * g.pCentresAu[i]! * g.dpAu * dth;
  return H;
}

describe('Jacobians (SCIENCE.md §7.8)', () => {
  it('a uniform area density gives dN/dp = 2πρp, dN/dE = 2πρ, and the sector density returns ρ', () => {
    const H = uniformDensity(50);
    const dNdp = radialSpectrum(g, H);
    const dNdE = energySpectrum(g, dNdp);
    for (const i of [0, 57, 199]) {
      expectClose(dNdp[i]!, 2 * Math.PI * 50 * g.pCentresAu[i]!, 1e-9, `dN/dp ${i}`);
      expectClose(dNdE[i]!, 2 * Math.PI * 50, 1e-9, `dN/dE ${i}`);
    }
    const d = new Float64Array(200);
    const c = new Float64Array(200);
    const nSec = sectorDensityKernel(g, H, 179.9, 10, d, c); // straddles ±180°
    expect(nSec).toBe(21);
    for (const i of [1, 100, 199]) expectClose(d[i]!, 50, 1e-9, `ρ ${i}`);
  });
});

describe('radial window and angular distribution', () => {
  it('window weights are the overlap fractions', () => {
    const w = radialWindowWeights(g, 0.015, 0.04);
    expectClose(w[1]!, 0.5, 1e-12, 'ring 1');
    expectClose(w[2]!, 1, 1e-12, 'ring 2');
    expectClose(w[3]!, 1, 1e-12, 'ring 3');
    expect(w[4]).toBe(0);
    expect(w[0]).toBe(0);
  });
  it('angular distribution sums the window; a full window keeps all counts', () => {
    const H = uniformDensity(1);
    const a = angularDistribution(g, H, 0, 2);
    let s = 0;
    for (const v of a) s += v;
    let t = 0;
    for (const v of H) t += v;
    expectClose(s, t, 1e-9, 'sum');
    expect(() => angularDistribution(g, H, 1, 1)).toThrow(/\[1, 1\]/);
  });
  it('auto window: half-maximum points of a Gaussian dN/dp (p0 ± 1.1774σ) [common practice]', () => {
    const dNdp = new Float64Array(200);
    for (let i = 0; i < 200; i++) dNdp[i] = 1000 * Math.exp(-0.5 * ((g.pCentresAu[i]! - 1.2) / 0.15) ** 2);
    const w = autoRadialWindow(g, dNdp)!;
    const hw = 0.15 * Math.sqrt(2 * Math.log(2));
    // 3-bin smoothing and linear interpolation on a 0.01 a.u. grid: 3e-3 a.u. is ample
    expectClose(w.pLo, 1.2 - hw, 3e-3, 'pLo');
    expectClose(w.pHi, 1.2 + hw, 3e-3, 'pHi');
    expect(w.resolved).toBe(true);
    expect(autoRadialWindow(g, new Float64Array(200))).toBeNull();
    const edge = new Float64Array(200).fill(1);
    expect(autoRadialWindow(g, edge)!.resolved).toBe(false);
  });
});
