// The archive queue `lobeline-archive` (C10, issue 14): one job per file and direction, `archive-<id>` or
// `restore-<id>`, run by lib/stewardship/archive.ts runMove (idempotent steps: copy → verify → mark → remove). A
// worker killed mid-copy stops renewing its lock; after ARCHIVE_LOCK_MS another worker's stalled-job check takes the
// job back and runMove resumes it. MariaDB holds the truth (raw_files.archive_state); each worker's sweep re-queues
// files left `archiving`/`restoring` whose job the queue no longer holds (Redis lost its data, the add failed).
import { type Job, Queue, UnrecoverableError, Worker } from 'bullmq';
import { z } from 'zod';
import { AppError } from '@/lib/errors';
import { log } from '@/lib/log';
import { createRedisConnection } from '@/lib/queue/connection';
import { filesInMotion, giveUpMove, type MoveHooks, MoveRefusedError, runMove } from '@/lib/stewardship/archive';

const alog = log.child({ surface: 'archive', part: 'worker' });

export const ARCHIVE_QUEUE = 'lobeline-archive';
export const ARCHIVE_ATTEMPTS = 6;
export const ARCHIVE_BACKOFF_MS = 5_000;
/** Lock of a running job: the copy and the hashing await between parts and ranges, so the lock timer keeps it. */
export const ARCHIVE_LOCK_MS = 10_000;
export const ARCHIVE_STALLED_INTERVAL_MS = 5_000;
/** The sweep re-queues files that have been moving for longer than this without a job in the queue. */
export const ARCHIVE_SWEEP_MIN_AGE_MS = 60_000;
export const ARCHIVE_SWEEP_EVERY_MS = 5 * 60_000;

export const archiveJobDataSchema = z.object({
  rawFileId: z.number().int().positive(),
  kind: z.enum(['archive', 'restore']),
});
export type ArchiveJobData = z.infer<typeof archiveJobDataSchema>;

export function archiveJobId(data: ArchiveJobData): string {
  return `${data.kind}-${data.rawFileId}`;
}

type Cache = { queue?: Queue<ArchiveJobData> };
const g = globalThis as typeof globalThis & { __lobelineArchiveQueue?: Cache };
if (!g.__lobelineArchiveQueue) g.__lobelineArchiveQueue = {};
const state: Cache = g.__lobelineArchiveQueue;

export function getArchiveQueue(): Queue<ArchiveJobData> {
  if (!state.queue) {
    state.queue = new Queue<ArchiveJobData>(ARCHIVE_QUEUE, {
      connection: createRedisConnection('archive-queue', { mode: 'fail-fast' }),
      defaultJobOptions: {
        attempts: ARCHIVE_ATTEMPTS,
        backoff: { type: 'exponential', delay: ARCHIVE_BACKOFF_MS },
        removeOnComplete: true,
        removeOnFail: true,
      },
    });
  }
  return state.queue;
}

/** Queues the move of one file (a second add while the job waits or runs is the same job). */
export async function enqueueMove(data: ArchiveJobData): Promise<void> {
  try {
    await getArchiveQueue().add(data.kind, archiveJobDataSchema.parse(data), { jobId: archiveJobId(data) });
  } catch (err) {
    throw new AppError('unavailable:queue', { cause: err, retryAfterSeconds: 60 });
  }
}

export async function closeArchiveQueue(): Promise<void> {
  const q = state.queue;
  state.queue = undefined;
  if (q) await q.close();
}

/** Re-queues files left moving without a job (deterministic ids: a job still queued is not doubled). */
export async function sweepMovingFiles(minAgeMs = ARCHIVE_SWEEP_MIN_AGE_MS): Promise<number> {
  const files = await filesInMotion(minAgeMs);
  for (const f of files) await enqueueMove({ rawFileId: f.id, kind: f.kind });
  return files.length;
}

export interface ArchiveWorkerOptions {
  name?: string;
  concurrency?: number;
  /** Awaited after each copied part of a multipart copy (the interrupted-copy test stops the worker here). */
  onCopyPart?: MoveHooks['onCopyPart'];
  /** `false` turns the sweep off (tests that count jobs). */
  sweep?: { everyMs?: number; minAgeMs?: number } | false;
}

function handler(options: ArchiveWorkerOptions) {
  return async (job: Job<ArchiveJobData>): Promise<{ outcome: string }> => {
    const parsed = archiveJobDataSchema.safeParse(job.data);
    if (!parsed.success) throw new UnrecoverableError(`malformed job payload for ${job.id}`);
    const { rawFileId, kind } = parsed.data;
    try {
      const outcome = await runMove(rawFileId, kind, {
        progress: (f) => job.updateProgress(Math.round(f * 100)),
        onCopyPart: options.onCopyPart,
      });
      return { outcome };
    } catch (err) {
      const last = err instanceof MoveRefusedError || job.attemptsMade + 1 >= (job.opts.attempts ?? ARCHIVE_ATTEMPTS);
      if (last) {
        const reason = err instanceof MoveRefusedError ? err.message : 'The file store or the database kept failing.';
        await giveUpMove(rawFileId, kind, reason).catch((e) =>
          alog.error('could not record a failed move', { rawFileId, kind, err: e }),
        );
      }
      if (err instanceof MoveRefusedError) throw new UnrecoverableError(err.message);
      throw err;
    }
  };
}

/** Starts an archive worker in this process; `close()` waits for the running job. */
export function startArchiveWorker(options: ArchiveWorkerOptions = {}): {
  worker: Worker<ArchiveJobData>;
  close: () => Promise<void>;
} {
  const connection = createRedisConnection('archive-worker');
  const worker = new Worker<ArchiveJobData>(ARCHIVE_QUEUE, handler(options), {
    connection,
    concurrency: options.concurrency ?? 2,
    name: options.name,
    lockDuration: ARCHIVE_LOCK_MS,
    stalledInterval: ARCHIVE_STALLED_INTERVAL_MS,
    maxStalledCount: 3,
  });
  worker.on('error', (err) => alog.warn('archive worker error', { err }));
  worker.on('failed', (job, err) => {
    // A job that stalled too often never reached the handler's catch block.
    if (!job || !/stalled/i.test(err?.message ?? '')) return;
    const data = archiveJobDataSchema.safeParse(job.data);
    if (data.success) void giveUpMove(data.data.rawFileId, data.data.kind, 'The worker stopped several times mid-job.');
  });
  let timer: NodeJS.Timeout | null = null;
  if (options.sweep !== false) {
    const sweep = () =>
      void sweepMovingFiles(options.sweep ? options.sweep.minAgeMs : undefined).catch((err) =>
        alog.warn('archive sweep failed', { err }),
      );
    timer = setInterval(sweep, (options.sweep ? options.sweep.everyMs : undefined) ?? ARCHIVE_SWEEP_EVERY_MS);
    timer.unref();
    sweep();
  }
  let closed = false;
  return {
    worker,
    close: async () => {
      if (closed) return;
      closed = true;
      if (timer) clearInterval(timer);
      await worker.close();
      await connection.quit().catch(() => connection.disconnect());
    },
  };
}
