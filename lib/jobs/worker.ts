// The BullMQ consumer of `lobeline-reduction`. Any number of these may run, on any machine that reaches the same
// MariaDB, Redis and S3. A worker killed mid-job (SIGKILL, power loss) stops renewing its lock; after
// `lockDuration` another worker's stalled-job check moves the job back to waiting and it runs again (STACK.md:
// recovery worked here with lockDuration = stalledInterval = 5000 ms).
//
// Keeping the lock of a CPU-heavy job: BullMQ renews the lock from a timer every lockDuration / 2, so the event loop
// must not be blocked longer than that. The engine awaits after every step (lib/jobs/engine.ts, `setImmediate`), and
// one step of the largest accepted frame is far shorter than 2.5 s (N1 in the README's bench section: one 512×512
// step in well under a second on this 2-core machine), so the 5 s lock is kept; a larger lock would only slow the
// recovery from a killed worker. Each worker also runs the lost-job sweep (./sweep.ts).
import { type Job, UnrecoverableError, Worker } from 'bullmq';
import { log } from '@/lib/log';
import { createRedisConnection } from '@/lib/queue/connection';
import { EVENT_MERGE_JOB, eventMergeJobDataSchema } from '@/lib/queue/event-flow';
import {
  REDUCTION_ATTEMPTS,
  REDUCTION_BACKOFF_TYPE,
  REDUCTION_QUEUE,
  type ReductionJobData,
  type ReductionJobOutcome,
  reductionBackoffMs,
  reductionJobDataSchema,
} from '@/lib/queue/reduction-queue';
import { processEventMerge } from './event-merge';
import { ReductionRefusedError } from './failure';
import { type JobContext, markReductionFailed, processReduction } from './reduce-scan';
import { startSweepTimer } from './sweep';

const wlog = log.child({ surface: 'reduction', part: 'worker' });

export const WORKER_LOCK_MS = 5_000;
export const WORKER_STALLED_INTERVAL_MS = 5_000;
/** Times a job may be found stalled (its worker died) before it is failed for good. */
export const WORKER_MAX_STALLED = 2;

export interface ReductionWorkerOptions {
  /** Jobs run at once in this process (default 1: a reduction is CPU-bound). */
  concurrency?: number;
  /** Shown in BullMQ and the log. */
  name?: string;
  /** The lost-job sweep of this worker (./sweep.ts); `false` turns it off. */
  sweep?: { intervalMs?: number; minAgeMs?: number } | false;
  /**
   * Awaited after each progress report of a job (fraction 0…1), before the job goes on. For instrumentation and
   * for the outage tests, which take a service away at a known point of a job.
   */
  onProgress?: (data: ReductionJobData, fraction: number) => Promise<void> | void;
}

function handler(onProgress: ReductionWorkerOptions['onProgress']) {
  return async (job: Job<ReductionJobData, ReductionJobOutcome>): Promise<ReductionJobOutcome> => {
    const parsed = reductionJobDataSchema.safeParse(job.data);
    if (!parsed.success) throw new UnrecoverableError(`malformed job payload for ${job.id}`);
    // The parent of a split event file (lib/queue/event-flow.ts): merge the chunks' histograms, then analyse.
    const merge = job.name === EVENT_MERGE_JOB ? eventMergeJobDataSchema.safeParse(job.data) : null;
    if (merge && !merge.success) throw new UnrecoverableError(`malformed merge payload for ${job.id}`);
    try {
      const run = merge?.success
        ? (_: ReductionJobData, c: JobContext) => processEventMerge(merge.data, c)
        : processReduction;
      return await run(parsed.data, {
        attemptsMade: job.attemptsMade,
        maxAttempts: job.opts.attempts ?? REDUCTION_ATTEMPTS,
        updateProgress: async (p) => {
          await job.updateProgress(p);
          await onProgress?.(parsed.data, p / 100);
        },
      });
    } catch (err) {
      // Permanent problems must not be retried: BullMQ skips the remaining attempts for UnrecoverableError.
      if (err instanceof ReductionRefusedError) throw new UnrecoverableError(err.message);
      throw err;
    }
  };
}

/** Starts a worker in this process; `close()` waits for the running job and ends its Redis connections. */
export function startReductionWorker(options: ReductionWorkerOptions = {}): {
  worker: Worker<ReductionJobData, ReductionJobOutcome>;
  close: () => Promise<void>;
} {
  const connection = createRedisConnection('worker');
  const worker = new Worker<ReductionJobData, ReductionJobOutcome>(REDUCTION_QUEUE, handler(options.onProgress), {
    connection,
    concurrency: options.concurrency ?? 1,
    name: options.name,
    lockDuration: WORKER_LOCK_MS,
    stalledInterval: WORKER_STALLED_INTERVAL_MS,
    maxStalledCount: WORKER_MAX_STALLED,
    settings: {
      backoffStrategy: (attemptsMade, type) =>
        type === REDUCTION_BACKOFF_TYPE ? reductionBackoffMs(attemptsMade) : reductionBackoffMs(1),
    },
  });
  worker.on('failed', (job, err) => {
    if (!job) return;
    // A job that stalled too often never reached our catch block: record it here (no-op when already recorded).
    if (/stalled/i.test(err?.message ?? '')) {
      const data = reductionJobDataSchema.safeParse(job.data);
      if (data.success) {
        void markReductionFailed({
          reductionJobId: data.data.reductionJobId,
          scanId: data.data.scanId,
          message:
            'The worker reducing this scan stopped several times in the middle of the job (it crashed or ran out of ' +
            'memory). Check the worker machines; then reduce the scan again.',
          attempts: job.attemptsMade + 1,
        });
      }
    }
  });
  worker.on('error', (err) => wlog.warn('worker error', { err }));
  const sweeper =
    options.sweep === false
      ? null
      : startSweepTimer({
          holder: options.name ?? `worker-${process.pid}`,
          intervalMs: options.sweep?.intervalMs,
          minAgeMs: options.sweep?.minAgeMs,
        });
  let closed = false;
  return {
    worker,
    close: async () => {
      if (closed) return;
      closed = true;
      await sweeper?.stop();
      await worker.close();
      await connection.quit().catch(() => connection.disconnect());
    },
  };
}
