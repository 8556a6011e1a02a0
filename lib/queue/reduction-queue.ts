// The reduction queue `lobeline-reduction`: its name, the job payload (zod), the deterministic job id that makes
// duplicate requests collapse, and the one Queue instance of this process.
import { Queue } from 'bullmq';
import { z } from 'zod';
import { closeQueueConnections, createRedisConnection } from './connection';

export const REDUCTION_QUEUE = 'lobeline-reduction';

/** Attempts per job (the first run plus two retries) and the first back-off delay (doubled each retry). */
export const REDUCTION_ATTEMPTS = 3;
export const REDUCTION_BACKOFF_MS = 2_000;

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
  resultId: number;
  reusedExisting: boolean;
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
      connection: createRedisConnection('queue'),
      defaultJobOptions: {
        attempts: REDUCTION_ATTEMPTS,
        backoff: { type: 'exponential', delay: REDUCTION_BACKOFF_MS },
        // MariaDB keeps the history (reduction_jobs); finished entries leave Redis so that a later request for
        // the same versions is not swallowed by an old entry with the same id.
        removeOnComplete: true,
        removeOnFail: true,
      },
    });
  }
  return state.queue;
}

/** Closes the queue and every Redis connection of this process. */
export async function closeReductionQueue(): Promise<void> {
  const q = state.queue;
  state.queue = undefined;
  if (q) await q.close();
  await closeQueueConnections();
}
