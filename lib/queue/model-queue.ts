// The model queue `lobeline-models` (issue 13, PRODUCT.md C9): long model runs (the CTMC-style ensemble of
// SCIENCE.md §10.7) for the comparison page. MariaDB's `model_cache` row is the truth about a run (state, progress,
// result); the job only names the row. The job id is the row's parameter hash, so asking twice queues one run.
import { Queue } from 'bullmq';
import { z } from 'zod';
import { AppError } from '@/lib/errors';
import { createRedisConnection } from './connection';
import { QUEUE_ADD_TIMEOUT_MS } from './reduction-queue';

export const MODEL_QUEUE = 'lobeline-models';
/** A model run is pure arithmetic: one retry covers a worker that died, more would repeat a real error. */
export const MODEL_ATTEMPTS = 2;

export const modelJobDataSchema = z.object({
  /** The model_cache row of this run. */
  cacheId: z.number().int().positive(),
  paramHash: z.string().regex(/^[0-9a-f]{64}$/),
});
export type ModelJobData = z.infer<typeof modelJobDataSchema>;

type Cache = { queue?: Queue<ModelJobData> };
const g = globalThis as typeof globalThis & { __lobelineModelQueue?: Cache };
if (!g.__lobelineModelQueue) g.__lobelineModelQueue = {};
const state: Cache = g.__lobelineModelQueue;

/** The process-wide producer side of the model queue (fails fast while Redis is away, like the reduction queue). */
export function getModelQueue(): Queue<ModelJobData> {
  if (!state.queue) {
    state.queue = new Queue<ModelJobData>(MODEL_QUEUE, {
      connection: createRedisConnection('model-queue', { mode: 'fail-fast' }),
      defaultJobOptions: {
        attempts: MODEL_ATTEMPTS,
        backoff: { type: 'fixed', delay: 5_000 },
        removeOnComplete: true,
        removeOnFail: true,
      },
    });
  }
  return state.queue;
}

/** `model-<hash>`: one run per parameter set, however often it is asked for. */
export function modelJobId(paramHash: string): string {
  return `model-${paramHash}`;
}

/** Adds a model run, bounded in time (AppError `unavailable:queue` when Redis did not take it). */
export async function addModelJob(data: ModelJobData, timeoutMs = QUEUE_ADD_TIMEOUT_MS) {
  const jobId = modelJobId(data.paramHash);
  let timer: NodeJS.Timeout | undefined;
  const timeout = new Promise<never>((_, reject) => {
    timer = setTimeout(
      () => reject(new AppError('unavailable:queue', { context: { jobId, timeoutMs }, retryAfterSeconds: 60 })),
      timeoutMs,
    );
  });
  try {
    return await Promise.race([getModelQueue().add('model-run', data, { jobId }), timeout]);
  } catch (err) {
    throw err instanceof AppError ? err : new AppError('unavailable:queue', { cause: err, retryAfterSeconds: 60 });
  } finally {
    clearTimeout(timer);
  }
}

/** Closes this process's model queue (the connections themselves close with closeQueueConnections). */
export async function closeModelQueue(): Promise<void> {
  const q = state.queue;
  state.queue = undefined;
  if (q) await q.close();
}
