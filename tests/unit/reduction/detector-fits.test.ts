import { describe, expect, it } from 'vitest';
import { fitAtiScale } from '@/reduction/ati-scale';
import { fitCircleKasa } from '@/reduction/circle-fit';
import { photonEnergyEv } from '@/reduction/constants';
import { ellipseMatrix, invert2x2 } from '@/reduction/ellipse-matrix';
import { expectClose, expectRel } from './helpers/close';

describe('VMI momentum scale from ATI rings (SCIENCE.md §7.1 worked example) [computed]', () => {
  const n = [0, 1, 2, 3, 4, 5];
  const hw = photonEnergyEv(800);
  it('rounded radii → κ = 2.000 075e-4 eV/px² (1e-9 relative per SCIENCE.md), E0 = 0.450 096 eV', () => {
    const f = fitAtiScale(n, [47.43, 100.0, 133.22, 159.68, 182.33, 202.47], hw);
    expectClose(f.slopePx2, 7748.7229, 5e-5, 'slope');
    expectClose(f.interceptPx2, 2250.3937, 5e-5, 'intercept');
    // SCIENCE.md quotes κ to 7 digits; the stated test tolerance is 1e-9 relative on the fit itself:
    expectRel(f.kappaEvPerPx2, hw / 7748.7229, 1e-8, 'κ vs ħω/slope');
    expectClose(f.kappaEvPerPx2, 2.000075e-4, 5e-11, 'κ');
    expectClose(f.e0Ev, 0.450096, 5e-7, 'E0');
    expectClose(f.momentumPerPixelAu, 3.834094e-3, 5e-10, 'α');
    // at r = 200 px: E = 8.000 30 eV, p = 0.766 819 a.u.
    expectClose(f.kappaEvPerPx2 * 200 ** 2, 8.0003, 5e-5, 'E(200)');
    expectClose(f.momentumPerPixelAu * 200, 0.766819, 5e-7, 'p(200)');
  });
  it('exact radii return κ_true = 2e-4 and E0 = 0.45 to 1e-12; relabelling orders changes E0 by ħω only', () => {
    const r = n.map((k) => Math.sqrt((0.45 + 1.549802 * k) / 2e-4));
    const f = fitAtiScale(n, r, 1.549802);
    expectRel(f.kappaEvPerPx2, 2e-4, 1e-12, 'κ');
    expectRel(f.e0Ev, 0.45, 1e-11, 'E0');
    const g = fitAtiScale(
      n.map((k) => k + 1),
      r,
      1.549802,
    );
    expectRel(g.kappaEvPerPx2, 2e-4, 1e-12, 'κ relabelled');
    expectClose(g.e0Ev, 0.45 - 1.549802, 1e-10, 'E0 relabelled');
    expect(() => fitAtiScale([1], [2], 1)).toThrow(/2 rings/);
    expect(() => fitAtiScale([1, 1], [2, 3], 1)).toThrow(RangeError);
  });
  it('weighted fit with radius errors still recovers exact data', () => {
    const r = n.map((k) => Math.sqrt((0.45 + 1.549802 * k) / 2e-4));
    const f = fitAtiScale(n, r, 1.549802, [0.1, 0.2, 0.3, 0.1, 0.5, 0.2]);
    expectRel(f.kappaEvPerPx2, 2e-4, 1e-12, 'κ');
  });
});

describe('Kåsa circle fit (SCIENCE.md §7.2 worked example) [computed]', () => {
  it('centre (512.3, 498.7), R = 150 from six points (inputs rounded to 1e-6 px)', () => {
    const f = fitCircleKasa(
      [662.3, 627.206666, 486.252773, 364.578837, 415.881859, 587.3],
      [498.7, 595.118141, 646.421163, 524.747227, 383.793334, 368.796189],
    );
    // the inputs carry 6 decimals, so 1e-6 px is the resolution of the check
    expectClose(f.cx, 512.3, 1e-6, 'cx');
    expectClose(f.cy, 498.7, 1e-6, 'cy');
    expectClose(f.r, 150, 1e-6, 'R');
  });
  it('rejects fewer than three or collinear points', () => {
    expect(() => fitCircleKasa([0, 1], [0, 1])).toThrow(/3 points/);
    expect(() => fitCircleKasa([0, 1, 2], [0, 1, 2])).toThrow(RangeError);
  });
});

describe('detector ellipse matrix (SCIENCE.md §7.3 worked example) [computed]', () => {
  it('ψ = 30°, q = 1.05 → M = [[1.0375, 0.021651], [0.021651, 1.0125]]; M⁻¹ returns (1, 0) to 1e-15', () => {
    const M = ellipseMatrix(1.05, 30);
    expectClose(M[0]!, 1.0375, 1e-15, 'm00');
    expectClose(M[1]!, 0.021651, 5e-7, 'm01');
    expectClose(M[2]!, 0.021651, 5e-7, 'm10');
    expectClose(M[3]!, 1.0125, 1e-15, 'm11');
    const inv = invert2x2(M);
    const v = [M[0]!, M[2]!]; // M·(1, 0)
    expectClose(inv[0]! * v[0]! + inv[1]! * v[1]!, 1, 1e-15, 'x');
    expectClose(inv[2]! * v[0]! + inv[3]! * v[1]!, 0, 1e-15, 'y');
    expect(() => ellipseMatrix(0, 0)).toThrow(/0/);
  });
});
