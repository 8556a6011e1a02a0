import 'server-only';
// One raw frame of a scan for the calibration bench (C7): the stored file from S3 to a scratch folder (size and
// SHA-256 checked against the catalogue on the way, as the worker does), an analyst's metadata correction applied
// over a scratch copy, then the counts of one step and its background frame. Files are read the way the
// reduction job reads them (reduction/hdf5/reader.ts), so the bench starts from the same numbers. The last file
// opened stays open for a minute (see CACHE below).
import { mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { AppError } from '@/lib/errors';
import { applyMetadataOverride } from '@/lib/ingest/override';
import { metadataOverrideSchema } from '@/lib/ingest/schemas';
import { downloadVerified, StoredFileMismatchError } from '@/lib/ingest/verify';
import { log } from '@/lib/log';
import { RawFile, Scan } from '@/models';
import type { ScanMetadata } from '@/reduction/formats';
import { loadH5wasmNode, openScanOrEventsPath } from '@/reduction/hdf5/node';
import type { ScanFile } from '@/reduction/hdf5/reader';

export interface BenchFrame {
  scanId: number;
  sha256: string;
  meta: ScanMetadata;
  step: number;
  counts: Float64Array;
  background: Float64Array | null;
}

/**
 * Reads step `step` of the scan's raw file (and its background frame).
 *
 * @throws AppError not_found (scan, file), conflict:scan (quarantined, event file, step out of range, changed bytes)
 */
export async function readBenchFrame({ scanId, step }: { scanId: number; step: number }): Promise<BenchFrame> {
  const scan = await Scan.findByPk(scanId);
  if (!scan) throw new AppError('not_found:scan');
  const file = await RawFile.findByPk(scan.raw_file_id);
  if (!file || file.deleted_at) {
    throw new AppError('not_found:scan', { message: 'The raw file of this scan is no longer stored.' });
  }
  if (file.status === 'quarantined') {
    throw new AppError('conflict:scan', {
      message: 'This scan’s file is quarantined; release it before opening it on the calibration bench.',
    });
  }
  const entry = await acquire(scanId, file);
  try {
    const meta = entry.scan.meta;
    if (step >= meta.shape.nStep) {
      throw new AppError('conflict:scan', {
        message: `The scan has ${meta.shape.nStep} step(s) (0…${meta.shape.nStep - 1}); step ${step} does not exist.`,
      });
    }
    const counts = entry.scan.readFrame(step);
    const background = entry.scan.readBackground(step);
    return { scanId, sha256: file.sha256, meta, step, counts, background };
  } finally {
    entry.users -= 1;
    entry.lastUsed = Date.now();
    if (entry.evicted && entry.users === 0) void closeEntry(entry);
  }
}

// CACHE //
// The bench reads one step per request, and the trial reads every step of a scan in a row: the last opened file is
// kept (one at a time, CACHE_IDLE_MS after its last use) so the steps of a scan cost one download. A file is closed
// only when no request is reading it.

interface OpenEntry {
  key: string;
  scan: ScanFile;
  workDir: string;
  cleanup: (() => Promise<void>) | null;
  users: number;
  lastUsed: number;
  evicted: boolean;
  closed: boolean;
}

const CACHE_IDLE_MS = 60_000;
let cached: OpenEntry | null = null;
let opening: { key: string; promise: Promise<OpenEntry> } | null = null;
let timer: ReturnType<typeof setInterval> | null = null;

async function closeEntry(e: OpenEntry): Promise<void> {
  if (e.closed) return;
  e.closed = true;
  try {
    e.scan.close();
  } catch (err) {
    log.warn('bench frame: close failed', { err });
  }
  if (e.cleanup) await e.cleanup().catch(() => undefined);
  await rm(e.workDir, { recursive: true, force: true }).catch(() => undefined);
}

function evict(e: OpenEntry): void {
  e.evicted = true;
  if (cached === e) cached = null;
  if (e.users === 0) void closeEntry(e);
}

/** An open file with this request counted as its user (counted in the same turn it is handed over). */
async function acquire(scanId: number, file: RawFile): Promise<OpenEntry> {
  for (let attempt = 0; attempt < 3; attempt++) {
    const e = await openCached(scanId, file);
    if (!e.closed) {
      e.users += 1;
      return e;
    }
  }
  throw new AppError('unavailable:storage', { message: 'The raw file could not be kept open; try again.' });
}

async function openCached(scanId: number, file: RawFile): Promise<OpenEntry> {
  const key = `${scanId}:${file.sha256}:${JSON.stringify(file.metadata_override ?? null)}`;
  if (cached && cached.key === key && !cached.evicted) return cached;
  if (opening && opening.key === key) return opening.promise;
  const promise = openFile(scanId, file, key).then((e) => {
    if (cached) evict(cached);
    cached = e;
    timer ??= setInterval(() => {
      if (cached && cached.users === 0 && Date.now() - cached.lastUsed > CACHE_IDLE_MS) evict(cached);
      if (!cached && timer) {
        clearInterval(timer);
        timer = null;
      }
    }, 10_000);
    timer.unref?.();
    return e;
  });
  opening = { key, promise };
  try {
    return await promise;
  } finally {
    if (opening?.promise === promise) opening = null;
  }
}

async function openFile(scanId: number, file: RawFile, key: string): Promise<OpenEntry> {
  const workDir = await mkdtemp(path.join(tmpdir(), `lobeline-bench-${scanId}-`));
  let cleanup: (() => Promise<void>) | null = null;
  try {
    const rawPath = path.join(workDir, 'raw.h5');
    try {
      await downloadVerified(file.bucket, file.storage_key, rawPath, {
        sha256: file.sha256,
        sizeBytes: Number(file.size_bytes),
      });
    } catch (err) {
      if (err instanceof StoredFileMismatchError) throw new AppError('conflict:scan', { message: err.message });
      throw err;
    }
    let scanPath = rawPath;
    if (file.metadata_override) {
      const parsed = metadataOverrideSchema.safeParse(file.metadata_override);
      if (!parsed.success) {
        throw new AppError('conflict:scan', {
          message: 'The corrected metadata recorded with this file is not valid any more.',
        });
      }
      const applied = await applyMetadataOverride(await loadH5wasmNode(), rawPath, parsed.data);
      if (!applied.ok) {
        throw new AppError('conflict:scan', {
          message: `The corrected metadata could not be applied: ${applied.problems.join('; ')}`,
        });
      }
      cleanup = applied.cleanup;
      scanPath = applied.path;
    }
    const opened = await openScanOrEventsPath(scanPath);
    if (!opened.ok) {
      throw new AppError('conflict:scan', {
        message: 'The raw file could not be read.',
        details: opened.problems.map((p) => p.message),
      });
    }
    if (opened.kind === 'events') {
      opened.scan.close();
      throw new AppError('conflict:scan', {
        message: 'The calibration bench works on detector images; this scan is an event list.',
      });
    }
    return { key, scan: opened.scan, workDir, cleanup, users: 0, lastUsed: Date.now(), evicted: false, closed: false };
  } catch (err) {
    if (cleanup) await cleanup().catch(() => undefined);
    await rm(workDir, { recursive: true, force: true }).catch(() => undefined);
    throw err;
  }
}
