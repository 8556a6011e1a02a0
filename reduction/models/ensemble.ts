/**
 * CTMC-style ensemble of classical trajectories for elliptical light (SCIENCE.md §10.7): birth times uniform over
 * the central half of the cos² pulse, each weighted by the static ADK rate at its field (m = 0), triangular tunnel
 * exit, Gaussian transverse velocities of σ = √(F/2κ) in the polarization plane (⊥ to the field) and out of it,
 * propagation in laser + Coulomb field and the Kepler asymptote (trajectory.ts). The in-plane emission angles are
 * histogrammed in 1° bins folded with period 180° (the two lobes of elliptical light on top of each other), and a
 * Gaussian plus a constant is fitted (Levenberg–Marquardt, each bin weighted by 1/Σw² of its trajectories): its centre
 * against the simple-man direction is the most-probable offset, its σ the lobe's rms width. Bound electrons
 * (energy ≤ 0 after the pulse) are counted apart with their weight.
 */
import { radToDeg, wrapDeg, wrapPositive } from '../angles';
import type { EllipticalFieldParams } from '../fields';
import { electricFieldEllipticalAu, vectorPotentialEllipticalAu } from '../fields';
import { levenbergMarquardt } from '../lm';
import { createPrng } from '../prng';
import { runTrajectory } from './trajectory';
import { adkRate, type BoundState, transverseSigmaAu } from './tunnelling';

// TYPES //

export interface EnsembleInput {
  field: EllipticalFieldParams & { envelopeDurationAu: number };
  state: BoundState;
  trajectories: number;
  seed: number;
  /** Integrator tolerance (default 1e-9: well below the statistical scatter of any ensemble that is run). */
  tolerance?: number;
  /** Called now and then with the trajectories done. */
  onProgress?: (done: number, total: number) => void;
}

export interface EnsembleResult {
  /** Most-probable offset θ_off, degrees (C7 sign), and its fit σ. */
  offsetDeg: number;
  offsetErrDeg: number | null;
  /** rms width of the lobe (the Gaussian's σ), degrees. */
  widthDeg: number;
  /** Fraction of electrons left bound after the pulse, weighted by their ionization rate. */
  boundFraction: number;
  /** The same as a fraction of the trajectories run (unweighted). */
  boundFractionOfTrajectories: number;
  trajectories: number;
}

// FUNCTIONS //

/** Runs the ensemble and fits its folded angular distribution. */
export function runEnsemble(input: EnsembleInput): EnsembleResult {
  const { field, state } = input;
  const rng = createPrng(input.seed);
  const tau = field.envelopeDurationAu;
  const hist = new Float64Array(180); // 1° bins over [0°, 180°): Σ w
  const hist2 = new Float64Array(180); // Σ w², the variance of each weighted bin
  let wFree = 0;
  let wBound = 0;
  let nBound = 0;
  const e = [0, 0];
  for (let i = 0; i < input.trajectories; i++) {
    const t0 = (rng.uniform() - 0.5) * (tau / 2); // central half of the pulse
    electricFieldEllipticalAu(t0, field, e);
    const f = Math.hypot(e[0]!, e[1]!);
    const w = adkRate(f, state);
    const s = transverseSigmaAu(f, state);
    const inPlane = rng.normal() * s;
    const out = rng.normal() * s;
    // in-plane direction perpendicular to the field at birth
    const vPerp: [number, number, number] = [(-e[1]! / f) * inPlane, (e[0]! / f) * inPlane, out];
    const r = runTrajectory({ field, state, t0, exit: 'triangular', vPerp, tolerance: input.tolerance ?? 1e-9 });
    if (r.pFinal === null) {
      wBound += w;
      nBound++;
    } else {
      wFree += w;
      const phi = wrapPositive(radToDeg(Math.atan2(r.pFinal[1], r.pFinal[0])), 180);
      const b = Math.min(179, Math.floor(phi));
      hist[b]! += w;
      hist2[b]! += w * w;
    }
    if (input.onProgress && (i + 1) % 500 === 0) input.onProgress(i + 1, input.trajectories);
  }
  // simple-man direction of the field maximum at t = 0, folded like the histogram
  const a0 = vectorPotentialEllipticalAu(0, field, [0, 0]);
  const phiSm = wrapPositive(radToDeg(Math.atan2(-a0[1]!, -a0[0]!)), 180);
  // centre the fit window on the histogram's maximum, ±90° around it (the folded lobe), unwrapped
  let iMax = 0;
  for (let i = 1; i < 180; i++) if (hist[i]! > hist[iMax]!) iMax = i;
  const xs = new Float64Array(180);
  const ys = new Float64Array(180);
  const ws = new Float64Array(180);
  // weights 1/Σw² per bin; an empty bin gets the smallest variance seen (it is not known to be noiseless)
  let minVar = Number.POSITIVE_INFINITY;
  for (let k = 0; k < 180; k++) if (hist2[k]! > 0) minVar = Math.min(minVar, hist2[k]!);
  for (let k = 0; k < 180; k++) {
    const j = (iMax - 90 + k + 180) % 180;
    xs[k] = iMax - 90 + k + 0.5;
    ys[k] = hist[j]!;
    ws[k] = 1 / (hist2[j]! > 0 ? hist2[j]! : minVar);
  }
  const peak = hist[iMax]!;
  const fit = levenbergMarquardt(
    {
      nParams: 4,
      evaluate(x, th, g) {
        const d = (x - th[1]!) / th[2]!;
        const ex = Math.exp(-0.5 * d * d);
        g[0] = ex;
        g[1] = (th[0]! * ex * d) / th[2]!;
        g[2] = (th[0]! * ex * d * d) / th[2]!;
        g[3] = 1;
        return th[0]! * ex + th[3]!;
      },
      valid: (th) => th[2]! > 1 && th[2]! < 120 && th[0]! > 0,
    },
    180,
    xs,
    ys,
    ws,
    [peak, iMax + 0.5, 30, 0],
  );
  const centre = fit.theta[1]!;
  const off = wrapDeg(centre - phiSm, 180);
  const cov = fit.covariance;
  return {
    offsetDeg: field.helicity * off,
    offsetErrDeg: cov ? Math.sqrt(cov[1 * 4 + 1]!) : null,
    widthDeg: Math.abs(fit.theta[2]!),
    boundFraction: wBound / (wBound + wFree),
    boundFractionOfTrajectories: nBound / input.trajectories,
    trajectories: input.trajectories,
  };
}
