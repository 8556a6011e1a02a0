// The reduction queue `lobeline-reduction`: its name, the job payload (zod), the deterministic job id that makes
// duplicate requests collapse, and the one Queue instance of this process.
import { Queue } from 'bullmq';
import { z } from 'zod';
import { AppError } from '@/lib/errors';
import { closeQueueConnections, createRedisConnection } from './connection';

export const REDUCTION_QUEUE = 'lobeline-reduction';

/**
 * Attempts per job: the first run plus five retries. Permanent problems (a bad file, a bad calibration) skip the
 * retries altogether; only transient ones (S3, MariaDB or Redis not answering) use them.
 */
export const REDUCTION_ATTEMPTS = 6;
/** First back-off delay; doubled after each failed attempt up to REDUCTION_BACKOFF_CAP_MS. */
export const REDUCTION_BACKOFF_MS = 5_000;
export const REDUCTION_BACKOFF_CAP_MS = 60_000;
/** Name of our back-off strategy in the job options (the worker supplies `reductionBackoffMs` for it). */
export const REDUCTION_BACKOFF_TYPE = 'lobeline-capped-exponential';

/**
 * Wait before the next attempt after `attemptsMade` failed ones (1 after the first failure): 5, 10, 20, 40, 60 s.
 * The five waits add up to 135 s, so a job whose services are away for a minute still has attempts left when they
 * are back (tests/unit/queue-backoff.test.ts checks the sum against that minute).
 */
export function reductionBackoffMs(attemptsMade: number): number {
  const n = Math.max(1, Math.floor(attemptsMade));
  return Math.min(REDUCTION_BACKOFF_CAP_MS, REDUCTION_BACKOFF_MS * 2 ** (n - 1));
}

/** Longest wait for Redis to accept a new job before the request fails with `unavailable:queue` (ms). */
export const QUEUE_ADD_TIMEOUT_MS = 4_000;

export const reductionJobDataSchema = z.object({
  scanId: z.number().int().positive(),
  calibrationId: z.number().int().positive(),
  settingsId: z.number().int().positive(),
  /** The reduction_jobs row that tracks this request. */
  reductionJobId: z.number().int().positive(),
});
export type ReductionJobData = z.infer<typeof reductionJobDataSchema>;

/** Result a finished job returns (kept only briefly by BullMQ; MariaDB holds the truth). */
export interface ReductionJobOutcome {
  /** null when the job handed a large event file over to chunk jobs (lib/queue/event-flow.ts). */
  resultId: number | null;
  reusedExisting: boolean;
  /** Id of the merge job that will finish the request (split event files only). */
  handedOffTo?: string;
}

/** `scan-<id>-cal-<c>-set-<s>`: the same scan with the same versions is one job, however often it is asked for. */
export function reductionJobId(scanId: number, calibrationId: number, settingsId: number): string {
  return `scan-${scanId}-cal-${calibrationId}-set-${settingsId}`;
}

type Cache = { queue?: Queue<ReductionJobData, ReductionJobOutcome> };
const g = globalThis as typeof globalThis & { __lobelineReductionQueue?: Cache };
if (!g.__lobelineReductionQueue) g.__lobelineReductionQueue = {};
const state: Cache = g.__lobelineReductionQueue;

/** The process-wide producer side of the queue. */
export function getReductionQueue(): Queue<ReductionJobData, ReductionJobOutcome> {
  if (!state.queue) {
    state.queue = new Queue<ReductionJobData, ReductionJobOutcome>(REDUCTION_QUEUE, {
      // Fail fast: a web request that queues work answers 503 within seconds while Redis is away, never hangs.
      connection: createRedisConnection('queue', { mode: 'fail-fast' }),
      defaultJobOptions: {
        attempts: REDUCTION_ATTEMPTS,
        backoff: { type: REDUCTION_BACKOFF_TYPE },
        // MariaDB keeps the history (reduction_jobs); finished entries leave Redis so that a later request for
        // the same versions is not swallowed by an old entry with the same id.
        removeOnComplete: true,
        removeOnFail: true,
      },
    });
  }
  return state.queue;
}

/**
 * Adds a reduction job with its deterministic id, bounded in time: the promise settles within
 * QUEUE_ADD_TIMEOUT_MS, with AppError `unavailable:queue` when Redis did not take the job. (A job already present
 * under the same id is left as it is: BullMQ ignores the second add.)
 */
export async function addReductionJob(data: ReductionJobData, jobId: string, timeoutMs = QUEUE_ADD_TIMEOUT_MS) {
  let timer: NodeJS.Timeout | undefined;
  const timeout = new Promise<never>((_, reject) => {
    timer = setTimeout(
      () => reject(new AppError('unavailable:queue', { context: { jobId, timeoutMs }, retryAfterSeconds: 60 })),
      timeoutMs,
    );
  });
  try {
    return await Promise.race([getReductionQueue().add('reduce-scan', data, { jobId }), timeout]);
  } catch (err) {
    throw err instanceof AppError ? err : new AppError('unavailable:queue', { cause: err, retryAfterSeconds: 60 });
  } finally {
    clearTimeout(timer);
  }
}

/** Closes the queue and every Redis connection of this process. */
export async function closeReductionQueue(): Promise<void> {
  const q = state.queue;
  state.queue = undefined;
  if (q) await q.close();
  await closeQueueConnections();
}
