// The BullMQ consumer of `lobeline-models` (issue 13): runs the ensemble of one model_cache row and writes its
// progress (trajectories done of the total, at most about once a second) and then its result into the row, which the
// comparison page reads through GET /api/comparisons/models. The ensemble yields to the event loop every 250
// trajectories (lib/comparison/models.ts), well inside the lock's renewal period.
import { type Job, UnrecoverableError, Worker } from 'bullmq';
import { computeEnsembleCurve, type EnsembleParams } from '@/lib/comparison/models';
import { log } from '@/lib/log';
import { createRedisConnection } from '@/lib/queue/connection';
import { MODEL_QUEUE, type ModelJobData, modelJobDataSchema } from '@/lib/queue/model-queue';
import { ModelCacheEntry } from '@/models';
import { WORKER_LOCK_MS, WORKER_STALLED_INTERVAL_MS } from './worker';

const mlog = log.child({ surface: 'comparison', part: 'model-worker' });

/** Shortest time between two progress writes to MariaDB (ms). */
export const MODEL_PROGRESS_WRITE_MS = 1_000;

/** Runs one model job: the ensemble of its row, progress and result into the row. Exported for the tests. */
export async function processModelJob(data: ModelJobData, updateProgress?: (pct: number) => Promise<void>) {
  const row = await ModelCacheEntry.findByPk(data.cacheId);
  if (!row || row.param_hash !== data.paramHash) throw new UnrecoverableError(`no model_cache row ${data.cacheId}`);
  if (row.state === 'done') return { cacheId: row.id, reused: true };
  if (row.model !== 'ensemble') throw new UnrecoverableError(`model ${row.model} does not run on the queue`);
  const params = row.params as unknown as EnsembleParams;
  const total = params.intensitiesWcm2.length * params.trajectories;
  await row.update({ state: 'running', progress_done: 0, progress_total: total, error: null });
  const t0 = performance.now();
  let last = 0;
  try {
    const curve = await computeEnsembleCurve(params, async (done) => {
      const now = performance.now();
      if (now - last < MODEL_PROGRESS_WRITE_MS && done < total) return;
      last = now;
      await row.update({ progress_done: done });
      await updateProgress?.(Math.round((100 * done) / total));
    });
    await row.update({
      state: 'done',
      progress_done: total,
      result: curve as unknown as Record<string, unknown>,
      compute_ms: Math.round(performance.now() - t0),
    });
    return { cacheId: row.id, reused: false };
  } catch (err) {
    await row
      .update({ state: 'failed', error: (err as Error).message?.slice(0, 500) ?? 'unknown error' })
      .catch(() => undefined);
    throw err;
  }
}

/** Starts a model worker in this process; `close()` waits for the running job and ends its Redis connection. */
export function startModelWorker(options: { name?: string; concurrency?: number } = {}): {
  worker: Worker<ModelJobData>;
  close: () => Promise<void>;
} {
  const connection = createRedisConnection('model-worker');
  const worker = new Worker<ModelJobData>(
    MODEL_QUEUE,
    async (job: Job<ModelJobData>) => {
      const parsed = modelJobDataSchema.safeParse(job.data);
      if (!parsed.success) throw new UnrecoverableError(`malformed model job payload for ${job.id}`);
      return processModelJob(parsed.data, (p) => job.updateProgress(p));
    },
    {
      connection,
      concurrency: options.concurrency ?? 1,
      name: options.name,
      lockDuration: WORKER_LOCK_MS,
      stalledInterval: WORKER_STALLED_INTERVAL_MS,
      maxStalledCount: 2,
    },
  );
  worker.on('error', (err) => mlog.warn('model worker error', { err }));
  let closed = false;
  return {
    worker,
    close: async () => {
      if (closed) return;
      closed = true;
      await worker.close();
      await connection.quit().catch(() => connection.disconnect());
    },
  };
}
