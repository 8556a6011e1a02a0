// Verification of large uploads off the web server's request path (C2): the completion route leaves the upload
// `verifying` and queues `upload-<id>` on `lobeline-upload-verify`; a worker copies the object to its stored key,
// hashes and reads the copy, and catalogues it (lib/ingest/service.ts verifyQueuedUpload). The browser polls
// GET /api/uploads/[id] for the verdict. The job is idempotent: an upload in any state but `verifying` is left alone.
import { type Job, Queue, UnrecoverableError, Worker } from 'bullmq';
import { z } from 'zod';
import { isAppError } from '@/lib/errors';
import { log } from '@/lib/log';
import { createRedisConnection } from '@/lib/queue/connection';

const vlog = log.child({ surface: 'upload', part: 'verify-worker' });

export const UPLOAD_VERIFY_QUEUE = 'lobeline-upload-verify';
export const UPLOAD_VERIFY_ATTEMPTS = 4;
export const UPLOAD_VERIFY_BACKOFF_MS = 3_000;
/**
 * The lock outlives the longest synchronous stretch of a verification (reading every frame of a large file through
 * h5wasm between two awaits), so a busy but living worker is not taken for a dead one.
 */
export const UPLOAD_VERIFY_LOCK_MS = 60_000;

export const uploadVerifyDataSchema = z.object({
  uploadId: z.number().int().positive(),
  ip: z.string().max(64).nullable(),
});
export type UploadVerifyData = z.infer<typeof uploadVerifyDataSchema>;

export const uploadVerifyJobId = (uploadId: number) => `upload-${uploadId}`;

type Cache = { queue?: Queue<UploadVerifyData> };
const g = globalThis as typeof globalThis & { __lobelineVerifyQueue?: Cache };
if (!g.__lobelineVerifyQueue) g.__lobelineVerifyQueue = {};
const state: Cache = g.__lobelineVerifyQueue;

export function getUploadVerifyQueue(): Queue<UploadVerifyData> {
  if (!state.queue) {
    state.queue = new Queue<UploadVerifyData>(UPLOAD_VERIFY_QUEUE, {
      connection: createRedisConnection('verify-queue'),
      defaultJobOptions: {
        attempts: UPLOAD_VERIFY_ATTEMPTS,
        backoff: { type: 'exponential', delay: UPLOAD_VERIFY_BACKOFF_MS },
        // MariaDB holds the outcome (uploads); a finished entry leaves Redis so that completing again re-queues.
        removeOnComplete: true,
        removeOnFail: true,
      },
    });
  }
  return state.queue;
}

/** Queues the verification of one upload (a second call while the first job waits is the same job). */
export async function enqueueUploadVerification(data: UploadVerifyData): Promise<Job<UploadVerifyData>> {
  return getUploadVerifyQueue().add('verify', uploadVerifyDataSchema.parse(data), {
    jobId: uploadVerifyJobId(data.uploadId),
  });
}

export async function closeUploadVerifyQueue(): Promise<void> {
  const q = state.queue;
  state.queue = undefined;
  if (q) await q.close();
}

/**
 * Schedules the removal of an upload's key once every URL handed out for it has expired (PRESIGN_SECONDS, plus a
 * minute): a PUT through a still-valid URL after the upload finished can only (re)create that key, never the
 * stored one, and this removes what it left.
 */
export async function scheduleUploadLeftoverRemoval(uploadId: number, presignSeconds: number): Promise<void> {
  await getUploadVerifyQueue().add(
    'leftovers',
    { uploadId, ip: null },
    { jobId: `leftovers-${uploadId}`, delay: (presignSeconds + 60) * 1000 },
  );
}

async function handle(job: Job<UploadVerifyData>): Promise<{ outcome: string | null }> {
  if (job.name === 'leftovers') {
    const { removeUploadLeftovers } = await import('@/lib/ingest/service');
    const removed = await removeUploadLeftovers(Number(job.data.uploadId));
    return { outcome: removed ? 'removed' : null };
  }
  const parsed = uploadVerifyDataSchema.safeParse(job.data);
  if (!parsed.success) throw new UnrecoverableError(`malformed job payload for ${job.id}`);
  const { verifyQueuedUpload, giveUpQueuedVerification } = await import('@/lib/ingest/service');
  try {
    const outcome = await verifyQueuedUpload(parsed.data.uploadId, parsed.data.ip);
    return { outcome: outcome?.outcome ?? null };
  } catch (err) {
    // A refusal (size, checksum) already marked the upload failed and removed its objects: nothing to retry.
    if (isAppError(err) && err.surface === 'upload') throw new UnrecoverableError(err.message);
    const last = job.attemptsMade + 1 >= (job.opts.attempts ?? UPLOAD_VERIFY_ATTEMPTS);
    if (last) {
      await giveUpQueuedVerification(
        parsed.data.uploadId,
        'The file store or the database could not be reached while the file was verified. Send the file again to retry.',
      ).catch((e) => vlog.error('could not record a failed verification', { uploadId: parsed.data.uploadId, err: e }));
    }
    throw err;
  }
}

/** Starts a verification worker in this process; `close()` waits for the running job. */
export function startUploadVerifyWorker(options: { concurrency?: number; name?: string } = {}): {
  worker: Worker<UploadVerifyData>;
  close: () => Promise<void>;
} {
  const connection = createRedisConnection('verify-worker');
  const worker = new Worker<UploadVerifyData>(UPLOAD_VERIFY_QUEUE, handle, {
    connection,
    concurrency: options.concurrency ?? 1,
    name: options.name,
    lockDuration: UPLOAD_VERIFY_LOCK_MS,
  });
  worker.on('error', (err) => vlog.warn('verify worker error', { err }));
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
