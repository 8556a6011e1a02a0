// Model overlays of the comparison page (PRODUCT.md C9, SCIENCE.md §4.2, §10.3–§10.6), computed on the server from
// reduction/models for one target, wavelength and ellipticity at the intensities asked for:
// - simple_man: the electron leaves with −A(t₀) at the field maximum, no Coulomb force: offset 0, |p| = εF_a/ω;
// - trajectory: ONE classical Coulomb-corrected trajectory (reduction/models/trajectory.ts) born at the field
//   maximum of an 8-cycle cos² pulse at the triangular-barrier exit Ip/F with zero velocity, propagated in laser plus
//   −1/r field, Kepler asymptote — the procedure of SCIENCE.md §10.5;
// - keldysh_rutherford: tan(Θ/2) = Zω²/(Ip F) (§10.6), drawn as the full angle Θ.
// - ensemble: the CTMC-style ensemble of §10.7 (reduction/models/ensemble.ts) on its own log grid of intensities
//   (ensembleGrid), ENSEMBLE_TRAJECTORIES per intensity; a long run, so it goes through the model queue
//   (lib/queue/model-queue.ts, lib/jobs/model-job.ts) and is cached in MariaDB (./model-cache.ts).
// The fast models are computed in the request and kept in the same MariaDB cache, with a small in-process memo in
// front.
import { ionizationEnergyEv, omegaAu } from '@/reduction/constants';
import { ellipticalFieldAmplitudes, simpleManMomentumAu } from '@/reduction/fields';
import { EnsembleRun } from '@/reduction/models/ensemble';
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
  model: Exclude<ModelName, 'ensemble'>;
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
  model: Exclude<ModelName, 'ensemble'>;
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

// ENSEMBLE //

/** Trajectories per intensity of the ensemble overlay (seed-to-seed sd of the offset ≈ 0.6° at this N, He 800 nm). */
export const ENSEMBLE_TRAJECTORIES = 20_000;
/** Grid of the ensemble: 10 points per decade of intensity, at most this many. */
export const ENSEMBLE_GRID_PER_DECADE = 10;
export const ENSEMBLE_GRID_MAX = 12;
/** Fixed seed: the same parameters always give the same curve (and so the same cache entry). */
export const ENSEMBLE_SEED = 20_261_206;

/**
 * The ensemble's intensities for a requested range: the points 10^(k/10) W/cm² from the last one at or below the
 * lowest request to the first at or above the highest, thinned to at most ENSEMBLE_GRID_MAX. The grid does not move
 * with small changes of the data, so the cache keeps answering.
 */
export function ensembleGrid(intensitiesWcm2: number[]): number[] {
  const ok = intensitiesWcm2.filter((v) => Number.isFinite(v) && v > 0);
  if (!ok.length) return [];
  const step = 1 / ENSEMBLE_GRID_PER_DECADE;
  const lo = Math.floor(Math.log10(Math.min(...ok)) / step + 1e-9);
  const hi = Math.ceil(Math.log10(Math.max(...ok)) / step - 1e-9);
  let ks = Array.from({ length: hi - lo + 1 }, (_, i) => lo + i);
  if (ks.length > ENSEMBLE_GRID_MAX) {
    const n = ENSEMBLE_GRID_MAX;
    ks = [...new Set(Array.from({ length: n }, (_, i) => Math.round(lo + ((hi - lo) * i) / (n - 1))))];
  }
  return ks.map((k) => Number((10 ** (k * step)).toPrecision(6)));
}

export interface EnsembleParams {
  target: string;
  wavelengthNm: number;
  ellipticity: number;
  intensitiesWcm2: number[];
  trajectories: number;
  seed: number;
}

/**
 * Runs the ensemble at every grid intensity, yielding to the event loop between slices of trajectories (so a queue
 * worker keeps renewing its lock) and reporting progress over the whole run.
 */
export async function computeEnsembleCurve(
  params: EnsembleParams,
  onProgress?: (done: number, total: number) => Promise<void> | void,
): Promise<ModelCurve> {
  const text = MODEL_TEXT.ensemble;
  const state = stateOf(params.target);
  const base = { model: 'ensemble' as const, ...text, sampling: 'grid' as const, state: 'done' as const };
  if (!state) {
    return {
      ...base,
      points: params.intensitiesWcm2.map((i) => ({ intensityWcm2: i, offsetDeg: null, radiusAu: null })),
      note: `No bound state is known for the target “${params.target}”, so this model is not drawn.`,
    };
  }
  const w = omegaAu(params.wavelengthNm);
  const total = params.intensitiesWcm2.length * params.trajectories;
  const points: ModelCurve['points'] = [];
  for (let k = 0; k < params.intensitiesWcm2.length; k++) {
    const i = params.intensitiesWcm2[k]!;
    const { fMajorAu } = ellipticalFieldAmplitudes(i, params.ellipticity);
    const run = new EnsembleRun({
      field: {
        fMajorAu,
        ellipticity: params.ellipticity,
        helicity: 1,
        omegaAu: w,
        envelopeDurationAu: (TRAJECTORY_PULSE_CYCLES * 2 * Math.PI) / w,
      },
      state,
      trajectories: params.trajectories,
      seed: params.seed + k,
    });
    while (!run.step(250)) {
      await onProgress?.(k * params.trajectories + run.done, total);
      await new Promise((r) => setImmediate(r));
    }
    await onProgress?.((k + 1) * params.trajectories, total);
    try {
      const r = run.result();
      points.push({
        intensityWcm2: i,
        offsetDeg: r.offsetDeg,
        offsetErrDeg: r.offsetErrDeg,
        widthDeg: r.widthDeg,
        radiusAu: null,
      });
    } catch {
      points.push({ intensityWcm2: i, offsetDeg: null, radiusAu: null });
    }
  }
  const missing = points.filter((p) => p.offsetDeg === null).length;
  return { ...base, points, note: missing ? `The lobe fit failed at ${missing} of the intensities.` : null };
}
