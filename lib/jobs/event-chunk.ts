// The chunk jobs of a split event file (lib/queue/event-flow.ts): each one histograms one contiguous event range
// onto the momentum grid and stores the partial histogram under its deterministic key (./event-chunk-store.ts).
// Any number of chunk workers may run on any machine that reaches the same MariaDB, Redis and S3.
//
// Idempotent: storing a chunk again overwrites its row, so a chunk that runs twice (its worker was killed after
// storing but before BullMQ heard of it, or in the middle of the range) is still summed once by the merge.
// A killed worker stops renewing its lock; after WORKER_LOCK_MS the stalled-job check of another chunk worker moves
// the chunk back to waiting and it is done again from its first event. The lock is kept while a chunk runs because
// the range is read and counted in slices of `events.chunk_events` with an await after each (one slice of 10⁶
// events takes well under a second, EVENTS in the README's bench section).
//
// The raw file is downloaded (and its SHA-256 checked) once per worker process and request, then reused by every
// chunk of that request the process takes; it is removed when a chunk of another request arrives or the worker
// stops.
import { mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { type Job, UnrecoverableError, Worker } from 'bullmq';
import { getDb } from '@/lib/db';
import { downloadVerified, StoredFileMismatchError } from '@/lib/ingest/verify';
import { log } from '@/lib/log';
import { createRedisConnection } from '@/lib/queue/connection';
import { EVENT_CHUNK_QUEUE, type EventChunkJobData, eventChunkJobDataSchema } from '@/lib/queue/event-flow';
import { REDUCTION_ATTEMPTS, REDUCTION_BACKOFF_TYPE, reductionBackoffMs } from '@/lib/queue/reduction-queue';
import { AnalysisSettingsVersion, DetectorCalibrationVersion, RawFile, ReductionJob, Scan } from '@/models';
import { histogramEventRange } from '@/reduction/events/event-range';
import { eventSettingsOf } from '@/reduction/events/reduce-events';
import { openScanOrEventsPath } from '@/reduction/hdf5/node';
import { ScanFileRefusedError } from '@/reduction/hdf5/problems';
import { type ChunkPartKey, countChunkParts, deleteChunkParts, putChunkPart } from './event-chunk-store';
import { describeAttempt, explainFailure, ReductionRefusedError } from './failure';
import { preflightEvents } from './preflight';
import { markReductionFailed } from './reduce-scan';
import { WORKER_LOCK_MS, WORKER_MAX_STALLED, WORKER_STALLED_INTERVAL_MS } from './worker';

const clog = log.child({ surface: 'reduction', part: 'event-chunk' });

export interface ChunkContext {
  attemptsMade: number;
  maxAttempts: number;
  /** Awaited after each slice of the range (fraction of the chunk done) and once more after the part was stored. */
  onProgress?: (data: EventChunkJobData, phase: 'events' | 'stored', fraction: number) => Promise<void> | void;
}

export interface ChunkOutcome {
  chunkIndex: number;
  /** true when the request was already closed and nothing was counted. */
  skipped: boolean;
  kept: number;
}

// RAW FILE CACHE //

interface CachedFile {
  rawFileId: number;
  dir: string;
  path: Promise<string>;
  users: number;
}
let cached: CachedFile | null = null;

async function dropCache(): Promise<void> {
  const c = cached;
  cached = null;
  if (c) await rm(c.dir, { recursive: true, force: true }).catch(() => undefined);
}

/** The verified raw file of a request on local disk (downloaded at most once per process while it is in use). */
async function acquireRawFile(file: RawFile): Promise<{ path: string; release: () => void }> {
  if (cached && cached.rawFileId !== file.id && cached.users === 0) await dropCache();
  let entry = cached && cached.rawFileId === file.id ? cached : null;
  let own: string | null = null;
  if (!entry) {
    const dir = await mkdtemp(path.join(tmpdir(), `lobeline-chunk-${file.id}-`));
    const target = path.join(dir, 'raw.h5');
    const download = downloadVerified(file.bucket, file.storage_key, target, {
      sha256: file.sha256,
      sizeBytes: Number(file.size_bytes),
    }).then(() => target);
    entry = { rawFileId: file.id, dir, path: download, users: 0 };
    // a second request's file while the first is still in use (concurrency > 1): kept apart, removed after use
    if (cached) own = dir;
    else cached = entry;
  }
  entry.users++;
  const e = entry;
  const release = () => {
    e.users--;
    if (own) void rm(own, { recursive: true, force: true }).catch(() => undefined);
  };
  try {
    return { path: await e.path, release };
  } catch (err) {
    release();
    if (cached === e) await dropCache();
    if (err instanceof StoredFileMismatchError && err.found.bytes === err.expected.sizeBytes) {
      throw new ReductionRefusedError(err.message);
    }
    throw err;
  }
}

// PROCESSOR //

/**
 * Runs one chunk job: reads and counts its range, stores the part (overwriting an earlier run's), then records
 * the chunks stored so far as the request's progress.
 *
 * @throws the original error for transient problems (BullMQ retries), ReductionRefusedError for permanent ones
 */
export async function processEventChunk(data: EventChunkJobData, ctx: ChunkContext): Promise<ChunkOutcome> {
  getDb(); // initialises the models in a process that has not touched the database yet
  const { reductionJobId, scanId, calibrationId, settingsId, chunkIndex, chunks, range } = data;
  const row = await ReductionJob.findByPk(reductionJobId);
  if (!row || row.status === 'failed' || row.status === 'succeeded') {
    // the request was closed (failed, or a merge already committed it): nothing to count
    return { chunkIndex, skipped: true, kept: 0 };
  }
  let release: (() => void) | null = null;
  let scanFile: { close(): void } | null = null;
  try {
    const scan = await Scan.findByPk(scanId);
    if (!scan) throw new ReductionRefusedError('The scan was deleted before it could be reduced.');
    const [file, cal, set] = await Promise.all([
      RawFile.findByPk(scan.raw_file_id),
      DetectorCalibrationVersion.findByPk(calibrationId),
      AnalysisSettingsVersion.findByPk(settingsId),
    ]);
    if (!file || file.deleted_at) throw new ReductionRefusedError('The raw file of this scan is no longer stored.');
    if (!cal || !set) throw new ReductionRefusedError('The chosen calibration or settings version no longer exists.');
    const { calibration, settings } = preflightEvents(cal.body, set.body, {
      calibration: `calibration v${cal.version}`,
      settings: `settings v${set.version}`,
    });
    const local = await acquireRawFile(file);
    release = local.release;
    // the calibration's spectrometer values complete a file that lacks some (the counting uses data.spectrometer)
    const opened = await openScanOrEventsPath(local.path, { spectrometer: calibration.spectrometer ?? null });
    if (!opened.ok) throw new ScanFileRefusedError(opened.problems);
    scanFile = opened.scan;
    if (opened.kind !== 'events') throw new ReductionRefusedError('The raw file of this scan is not an event file.');
    const slice = eventSettingsOf(settings).chunk_events;
    const part = await histogramEventRange(opened.scan, range, data.spectrometer, settings, slice, async (done, n) => {
      await ctx.onProgress?.(data, 'events', done / n);
      // Let timers (lock renewal) run between slices.
      await new Promise((resolve) => setImmediate(resolve));
    });
    scanFile.close();
    scanFile = null;
    const key: ChunkPartKey = { reductionJobId, calibrationId, settingsId, softwareVersion: data.softwareVersion };
    await putChunkPart(key, { chunkIndex, ...range, tally: part.tally, gridN: part.gridN, hist: part.hist });
    const done = await countChunkParts(key);
    await ReductionJob.update(
      { chunks_done: done, progress: 0.05 + 0.85 * (done / chunks) },
      { where: { id: reductionJobId, status: ['queued', 'running'] } },
    );
    await ctx.onProgress?.(data, 'stored', 1);
    return { chunkIndex, skipped: false, kept: part.tally.kept };
  } catch (err) {
    const ex = explainFailure(err);
    const attemptNo = ctx.attemptsMade + 1;
    const outcome = describeAttempt(ex, attemptNo, ctx.maxAttempts, reductionBackoffMs(attemptNo));
    clog.warn('chunk attempt failed', { reductionJobId, chunkIndex, attemptNo, final: outcome.final, err });
    if (outcome.final) {
      await markReductionFailed({
        reductionJobId,
        scanId,
        message: `Chunk ${chunkIndex + 1} of ${chunks}: ${outcome.jobMessage}`,
        attempts: attemptNo,
      });
      // the request is closed: its stored parts will never be merged
      await deleteChunkParts(reductionJobId).catch(() => undefined);
    }
    if (ex.transient && !outcome.final) throw err;
    throw err instanceof ReductionRefusedError ? err : new ReductionRefusedError(outcome.jobMessage);
  } finally {
    try {
      scanFile?.close();
    } catch {
      // already closed
    }
    release?.();
  }
}

// WORKER //

export interface EventChunkWorkerOptions {
  /** Chunks at once in this process (default 1: counting is CPU-bound). */
  concurrency?: number;
  name?: string;
  onProgress?: ChunkContext['onProgress'];
}

/** Starts a chunk worker in this process; `close()` waits for the running chunk and removes the cached file. */
export function startEventChunkWorker(options: EventChunkWorkerOptions = {}): {
  worker: Worker<EventChunkJobData, ChunkOutcome>;
  close: () => Promise<void>;
} {
  const connection = createRedisConnection('event-chunk-worker');
  const worker = new Worker<EventChunkJobData, ChunkOutcome>(
    EVENT_CHUNK_QUEUE,
    async (job: Job<EventChunkJobData, ChunkOutcome>) => {
      const parsed = eventChunkJobDataSchema.safeParse(job.data);
      if (!parsed.success) throw new UnrecoverableError(`malformed chunk payload for ${job.id}`);
      try {
        return await processEventChunk(parsed.data, {
          attemptsMade: job.attemptsMade,
          maxAttempts: job.opts.attempts ?? REDUCTION_ATTEMPTS,
          onProgress: async (d, phase, f) => {
            if (phase === 'events') await job.updateProgress(Math.round(f * 1000) / 10);
            await options.onProgress?.(d, phase, f);
          },
        });
      } catch (err) {
        if (err instanceof ReductionRefusedError) throw new UnrecoverableError(err.message);
        throw err;
      }
    },
    {
      connection,
      concurrency: options.concurrency ?? 1,
      name: options.name,
      // the same lock as the reduction worker (./worker.ts): a killed chunk worker's chunk is redone after 5 s
      lockDuration: WORKER_LOCK_MS,
      stalledInterval: WORKER_STALLED_INTERVAL_MS,
      maxStalledCount: WORKER_MAX_STALLED,
      settings: {
        backoffStrategy: (attemptsMade, type) =>
          type === REDUCTION_BACKOFF_TYPE ? reductionBackoffMs(attemptsMade) : reductionBackoffMs(1),
      },
    },
  );
  worker.on('failed', (job, err) => {
    if (!job) return;
    // A chunk that stalled too often never reached the catch block above: close the request here.
    if (/stalled/i.test(err?.message ?? '')) {
      const data = eventChunkJobDataSchema.safeParse(job.data);
      if (data.success) {
        void markReductionFailed({
          reductionJobId: data.data.reductionJobId,
          scanId: data.data.scanId,
          message:
            `The worker counting chunk ${data.data.chunkIndex + 1} of ${data.data.chunks} stopped several times in ` +
            'the middle of it (it crashed or ran out of memory). Check the worker machines; then reduce the scan again.',
          attempts: job.attemptsMade + 1,
        }).then(() => deleteChunkParts(data.data.reductionJobId).catch(() => undefined));
      }
    }
  });
  worker.on('error', (err) => clog.warn('chunk worker error', { err }));
  let closed = false;
  return {
    worker,
    close: async () => {
      if (closed) return;
      closed = true;
      await worker.close();
      await connection.quit().catch(() => connection.disconnect());
      await dropCache();
    },
  };
}
