// The fixity queue `lobeline-fixity` (C10/C11, issue 14): a BullMQ job scheduler `fixity-rolling` adds a
// `fixity-batch` job every LOBELINE_FIXITY_EVERY (lib/env.ts); each job runs one batch of the rolling plan
// (lib/stewardship/fixity.ts runFixityBatch). A steward's "check now" adds a one-off job with a batch size of its own.
// Any number of workers may run: BullMQ hands each job to one of them, and the scheduler is one entry in Redis
// however many workers upsert it.
import { type Job, Queue, Worker } from 'bullmq';
import { z } from 'zod';
import { getEnv } from '@/lib/env';
import { AppError } from '@/lib/errors';
import { log } from '@/lib/log';
import { createRedisConnection } from '@/lib/queue/connection';
import { type FixityRunSummary, runFixityBatch } from '@/lib/stewardship/fixity';

const flog = log.child({ surface: 'fixity', part: 'worker' });

export const FIXITY_QUEUE = 'lobeline-fixity';
export const FIXITY_SCHEDULER_ID = 'fixity-rolling';
/** Hashing awaits between ranges, so the lock timer keeps a long batch alive. */
export const FIXITY_LOCK_MS = 30_000;

export const fixityJobDataSchema = z.object({
  /** Files to check in this run (absent: the rolling plan's batch size). */
  limit: z.number().int().min(1).max(100_000).optional(),
  /** These files instead of the least-recently-checked ones. */
  rawFileIds: z.array(z.number().int().positive()).min(1).max(1000).optional(),
  triggeredBy: z.number().int().positive().nullable().optional(),
});
export type FixityJobData = z.infer<typeof fixityJobDataSchema>;

type Cache = { queue?: Queue<FixityJobData> };
const g = globalThis as typeof globalThis & { __lobelineFixityQueue?: Cache };
if (!g.__lobelineFixityQueue) g.__lobelineFixityQueue = {};
const state: Cache = g.__lobelineFixityQueue;

export function getFixityQueue(): Queue<FixityJobData> {
  if (!state.queue) {
    state.queue = new Queue<FixityJobData>(FIXITY_QUEUE, {
      connection: createRedisConnection('fixity-queue', { mode: 'fail-fast' }),
      defaultJobOptions: {
        attempts: 3,
        backoff: { type: 'exponential', delay: 10_000 },
        removeOnComplete: 50,
        removeOnFail: 50,
      },
    });
  }
  return state.queue;
}

export async function closeFixityQueue(): Promise<void> {
  const q = state.queue;
  state.queue = undefined;
  if (q) await q.close();
}

/** Sets (or, with LOBELINE_FIXITY_EVERY=off, removes) the repeatable schedule. Idempotent. */
export async function scheduleFixity(): Promise<{ everyMs: number }> {
  const everyMs = getEnv().LOBELINE_FIXITY_EVERY;
  const q = getFixityQueue();
  if (everyMs <= 0) {
    await q.removeJobScheduler(FIXITY_SCHEDULER_ID);
    return { everyMs: 0 };
  }
  await q.upsertJobScheduler(FIXITY_SCHEDULER_ID, { every: everyMs }, { name: 'fixity-batch', data: {} });
  return { everyMs };
}

/** A one-off run now (the steward's button); returns the BullMQ job id. */
export async function enqueueFixityRun(data: FixityJobData): Promise<string> {
  try {
    const job = await getFixityQueue().add('fixity-now', fixityJobDataSchema.parse(data));
    return String(job.id);
  } catch (err) {
    throw new AppError('unavailable:queue', { cause: err, retryAfterSeconds: 60 });
  }
}

async function handle(job: Job<FixityJobData>): Promise<Omit<FixityRunSummary, 'failures'> & { failed: number }> {
  const parsed = fixityJobDataSchema.safeParse(job.data ?? {});
  const data = parsed.success ? parsed.data : {};
  const { failures, ...rest } = await runFixityBatch({
    limit: data.limit,
    rawFileIds: data.rawFileIds,
    triggeredBy: data.triggeredBy ?? null,
  });
  return { ...rest, failed: failures.length };
}

export function startFixityWorker(options: { name?: string; schedule?: boolean } = {}): {
  worker: Worker<FixityJobData>;
  close: () => Promise<void>;
} {
  const connection = createRedisConnection('fixity-worker');
  const worker = new Worker<FixityJobData>(FIXITY_QUEUE, handle, {
    connection,
    concurrency: 1,
    name: options.name,
    lockDuration: FIXITY_LOCK_MS,
  });
  worker.on('error', (err) => flog.warn('fixity worker error', { err }));
  if (options.schedule !== false) {
    void scheduleFixity().then(
      ({ everyMs }) => flog.info('fixity schedule', { everyMs }),
      (err) => flog.warn('could not set the fixity schedule', { err }),
    );
  }
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
