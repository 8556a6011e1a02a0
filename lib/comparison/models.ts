// Model overlays of the comparison page (PRODUCT.md C9, SCIENCE.md §4.2, §10.3–§10.6), computed on the server from
// reduction/models for one target, wavelength and ellipticity at the intensities asked for:
// - simple_man: the electron leaves with −A(t₀) at the field maximum, no Coulomb force: offset 0, |p| = εF_a/ω;
// - trajectory: ONE classical Coulomb-corrected trajectory (reduction/models/trajectory.ts) born at the field
//   maximum of an 8-cycle cos² pulse at the triangular-barrier exit Ip/F with zero velocity, propagated in laser plus
//   −1/r field, Kepler asymptote — the procedure of SCIENCE.md §10.5;
// - keldysh_rutherford: tan(Θ/2) = Zω²/(Ip F) (§10.6), drawn as the full angle Θ.
// The ensemble (reduction/models/ensemble.ts) is not offered: its values do not yet agree with §10.7.
// Results are kept in a small in-process cache per parameter set (a few ms per trajectory; no database cache yet).
import { ionizationEnergyEv, omegaAu } from '@/reduction/constants';
import { ellipticalFieldAmplitudes, simpleManMomentumAu } from '@/reduction/fields';
import { keldyshRutherfordDeg, runTrajectory } from '@/reduction/models/trajectory';
import { type BoundState, boundStateOf } from '@/reduction/models/tunnelling';
import { MODEL_TEXT, type ModelCurve, type ModelName } from './spec';

export { MODEL_TEXT };

// VARIABLES //

/** Pulse of the trajectory model: 8 optical cycles, cos² envelope (as in SCIENCE.md §10.5). */
export const TRAJECTORY_PULSE_CYCLES = 8;

const cache = new Map<string, ModelCurve>();
const CACHE_LIMIT = 400;

// FUNCTIONS //

function stateOf(target: string): BoundState | null {
  const ip = ionizationEnergyEv(target);
  if (ip === null) return null;
  const canonical = target.length <= 2 ? target.charAt(0).toUpperCase() + target.slice(1).toLowerCase() : target;
  return boundStateOf(canonical, ip);
}

/**
 * One model's curve for an elliptically polarised field.
 *
 * @param input - target name (He, Ne, Ar, …), wavelength (nm), ε ∈ (0, 1], cycle-averaged total intensities (W/cm²)
 * @returns offsets (deg) and in-plane final momenta (a.u.) per intensity, with the model's one-line assumptions
 */
export function modelCurve(input: {
  model: ModelName;
  target: string;
  wavelengthNm: number;
  ellipticity: number;
  intensitiesWcm2: number[];
}): ModelCurve {
  const key = JSON.stringify([input.model, input.target, input.wavelengthNm, input.ellipticity, input.intensitiesWcm2]);
  const hit = cache.get(key);
  if (hit) return hit;
  const curve = computeCurve(input);
  if (cache.size >= CACHE_LIMIT) cache.delete(cache.keys().next().value as string);
  cache.set(key, curve);
  return curve;
}

function computeCurve(input: {
  model: ModelName;
  target: string;
  wavelengthNm: number;
  ellipticity: number;
  intensitiesWcm2: number[];
}): ModelCurve {
  const { model, wavelengthNm: lambda, ellipticity: eps } = input;
  const text = MODEL_TEXT[model];
  const w = omegaAu(lambda);
  const empty = (note: string): ModelCurve => ({
    model,
    ...text,
    points: input.intensitiesWcm2.map((i) => ({ intensityWcm2: i, offsetDeg: null, radiusAu: null })),
    note,
  });
  if (model === 'simple_man') {
    return {
      model,
      ...text,
      points: input.intensitiesWcm2.map((i) => ({
        intensityWcm2: i,
        offsetDeg: 0,
        radiusAu: simpleManMomentumAu({
          kind: 'angular_streaking',
          intensityWcm2: i,
          wavelengthNm: lambda,
          ellipticity: eps,
          fieldRatio: null,
        }),
      })),
      note: null,
    };
  }
  const state = stateOf(input.target);
  if (!state) return empty(`No bound state is known for the target “${input.target}”, so this model is not drawn.`);
  if (model === 'keldysh_rutherford') {
    return {
      model,
      ...text,
      points: input.intensitiesWcm2.map((i) => {
        const { fMajorAu } = ellipticalFieldAmplitudes(i, eps);
        return { intensityWcm2: i, offsetDeg: keldyshRutherfordDeg(w, fMajorAu, state).full, radiusAu: null };
      }),
      note: null,
    };
  }
  let bound = 0;
  const points = input.intensitiesWcm2.map((i) => {
    const { fMajorAu } = ellipticalFieldAmplitudes(i, eps);
    const field = {
      fMajorAu,
      ellipticity: eps,
      helicity: 1 as const,
      omegaAu: w,
      envelopeDurationAu: (TRAJECTORY_PULSE_CYCLES * 2 * Math.PI) / w,
    };
    const r = runTrajectory({ field, state, t0: 0, exit: 'triangular' });
    if (r.offsetDeg === null) bound++;
    return { intensityWcm2: i, offsetDeg: r.offsetDeg, radiusAu: r.pPlaneAu };
  });
  return {
    model,
    ...text,
    points,
    note: bound ? `At ${bound} of the intensities the model electron stays bound (no final momentum).` : null,
  };
}

/** Model values between and around data intensities: `n` log-spaced intensities spanning [lo, hi]. */
export function logSpaced(lo: number, hi: number, n: number): number[] {
  if (!(lo > 0) || !(hi >= lo) || n < 2) return lo > 0 ? [lo] : [];
  const a = Math.log(lo);
  const b = Math.log(hi);
  return Array.from({ length: n }, (_, k) => Number(Math.exp(a + ((b - a) * k) / (n - 1)).toPrecision(6)));
}
