import 'server-only';
// MariaDB cache of the comparison page's model overlays (issue 13, PRODUCT.md C9), table `model_cache`: one row per
// parameter set, keyed by the SHA-256 of a canonical JSON of { model, code version, parameters } (keys sorted,
// numbers rounded to 10 significant digits), so a cached model answers at once and a change of the model code (a new
// MODEL_CODE_VERSION) never serves an old answer.
// - simple_man, trajectory, keldysh_rutherford: fast; computed in the request when missing, then stored.
// - ensemble: a row is made in state `queued` and a job goes on the model queue; the answer says `queued`/`running`
//   with the progress the worker writes into the row (lib/jobs/model-job.ts), and the page asks again.
import { createHash } from 'node:crypto';
import { UniqueConstraintError } from 'sequelize';
import { log } from '@/lib/log';
import { addModelJob } from '@/lib/queue/model-queue';
import { ModelCacheEntry } from '@/models';
import {
  ENSEMBLE_SEED,
  ENSEMBLE_TRAJECTORIES,
  type EnsembleParams,
  ensembleGrid,
  MODEL_TEXT,
  modelCurve,
} from './models';
import type { ModelCurve, ModelName } from './spec';

const mlog = log.child({ surface: 'comparison', part: 'model-cache' });

/** A running ensemble writes its progress at least every few seconds; one silent this long has lost its worker. */
export const STALE_RUN_MS = 120_000;

/** Bump a model's version whenever its code changes its numbers: old cache rows are then never used again. */
export const MODEL_CODE_VERSION: Record<ModelName, string> = {
  simple_man: 'sm-1',
  trajectory: 'traj-1',
  keldysh_rutherford: 'kr-1',
  // 2: least-squares lobe fit (SCIENCE.md §10.7 check, reduction/models/ensemble.ts)
  ensemble: 'ens-2',
};

/** JSON with sorted keys and numbers rounded to 10 significant digits: equal parameters, equal text. */
export function canonicalJson(v: unknown): string {
  if (typeof v === 'number') {
    if (!Number.isFinite(v)) throw new RangeError('model parameters must be finite numbers');
    return JSON.stringify(Number(v.toPrecision(10)));
  }
  if (Array.isArray(v)) return `[${v.map(canonicalJson).join(',')}]`;
  if (v && typeof v === 'object') {
    const keys = Object.keys(v as object)
      .filter((k) => (v as Record<string, unknown>)[k] !== undefined)
      .sort();
    return `{${keys.map((k) => `${JSON.stringify(k)}:${canonicalJson((v as Record<string, unknown>)[k])}`).join(',')}}`;
  }
  return JSON.stringify(v);
}

/** The cache key of a model run: SHA-256 (hex) of the canonical { model, version, params }. */
export function modelParamHash(model: ModelName, params: Record<string, unknown>): string {
  const text = canonicalJson({ model, version: MODEL_CODE_VERSION[model], params });
  return createHash('sha256').update(text).digest('hex');
}

export interface ModelRequest {
  target: string;
  wavelengthNm: number;
  ellipticity: number;
  intensitiesWcm2: number[];
}

/** The ensemble's parameters for a request: its own grid over the requested range, fixed N and seed. */
export function ensembleParamsOf(req: ModelRequest): EnsembleParams {
  return {
    target: req.target,
    wavelengthNm: req.wavelengthNm,
    ellipticity: req.ellipticity,
    intensitiesWcm2: ensembleGrid(req.intensitiesWcm2),
    trajectories: ENSEMBLE_TRAJECTORIES,
    seed: ENSEMBLE_SEED,
  };
}

function fromRow(row: ModelCacheEntry, model: ModelName): ModelCurve | null {
  if (row.state === 'done' && row.result) return { ...(row.result as unknown as ModelCurve), cached: true };
  const params = row.params as unknown as { intensitiesWcm2?: number[] };
  const base = {
    model,
    ...MODEL_TEXT[model],
    sampling: 'grid' as const,
    points: (params.intensitiesWcm2 ?? []).map((i) => ({ intensityWcm2: i, offsetDeg: null, radiusAu: null })),
  };
  if (row.state === 'failed') {
    return {
      ...base,
      state: 'failed',
      progress: null,
      note: `The model run failed: ${row.error ?? 'no reason given'}.`,
    };
  }
  if (row.state === 'queued' || row.state === 'running') {
    return {
      ...base,
      state: row.state,
      progress: { done: row.progress_done, total: row.progress_total },
      note: null,
    };
  }
  return null;
}

/** A fast model through the cache: the stored answer, or computed now and stored. */
async function fastModel(model: Exclude<ModelName, 'ensemble'>, req: ModelRequest): Promise<ModelCurve> {
  const params = { ...req, intensitiesWcm2: [...req.intensitiesWcm2] };
  const hash = modelParamHash(model, params);
  try {
    const row = await ModelCacheEntry.findOne({ where: { param_hash: hash } });
    const hit = row ? fromRow(row, model) : null;
    if (hit) return hit;
  } catch (err) {
    // the cache is a convenience for the fast models: compute without it rather than fail the page
    mlog.warn('model cache not readable; computing without it', { err });
    return { ...modelCurve({ model, ...req }), sampling: 'requested', cached: false };
  }
  const t0 = performance.now();
  const curve: ModelCurve = { ...modelCurve({ model, ...req }), sampling: 'requested' };
  try {
    await ModelCacheEntry.create({
      param_hash: hash,
      model,
      params,
      result: curve as unknown as Record<string, unknown>,
      code_version: MODEL_CODE_VERSION[model],
      state: 'done',
      compute_ms: Math.round(performance.now() - t0),
    });
  } catch (err) {
    if (!(err instanceof UniqueConstraintError)) mlog.warn('model cache not written', { err });
  }
  return { ...curve, cached: false };
}

/** The ensemble through the cache and the model queue: done, or queued/running with its progress. */
async function ensembleModel(req: ModelRequest): Promise<ModelCurve> {
  const params = ensembleParamsOf(req);
  const hash = modelParamHash('ensemble', params as unknown as Record<string, unknown>);
  let row = await ModelCacheEntry.findOne({ where: { param_hash: hash } });
  if (row && row.state === 'failed') {
    // asked again after a failure: one new run (the failure is shown until it finishes)
    await row.update({ state: 'queued', progress_done: 0, error: null });
    await addModelJob({ cacheId: row.id, paramHash: hash });
  }
  if (!row) {
    try {
      row = await ModelCacheEntry.create({
        param_hash: hash,
        model: 'ensemble',
        params: params as unknown as Record<string, unknown>,
        result: null,
        code_version: MODEL_CODE_VERSION.ensemble,
        state: 'queued',
        progress_done: 0,
        progress_total: params.intensitiesWcm2.length * params.trajectories,
      });
    } catch (err) {
      if (!(err instanceof UniqueConstraintError)) throw err;
      row = await ModelCacheEntry.findOne({ where: { param_hash: hash } });
      if (!row) throw err;
    }
  }
  // a running row that has not moved for a while lost its worker and its job: run it again
  if (row.state === 'running' && Date.now() - row.updated_at.getTime() > STALE_RUN_MS) {
    await row.update({ state: 'queued', progress_done: 0 });
  }
  // a queued row whose job Redis lost (or that was made just now) gets its job; the deterministic id collapses twins
  if (row.state === 'queued') await addModelJob({ cacheId: row.id, paramHash: hash });
  return fromRow(row, 'ensemble')!;
}

/** The curves of the asked models for one parameter set, from the cache where it has them. */
export async function modelCurvesCached(req: ModelRequest, models: ModelName[]): Promise<ModelCurve[]> {
  return Promise.all(models.map((m) => (m === 'ensemble' ? ensembleModel(req) : fastModel(m, req))));
}
