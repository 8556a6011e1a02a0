import 'server-only';
// One raw frame of a scan for the calibration bench (C7): the stored file from S3 to a scratch folder (size and
// SHA-256 checked against the catalogue on the way, as the worker does), an analyst's metadata correction applied
// over a scratch copy, then the counts of one step and its background frame. Files are read the way the
// reduction job reads them (reduction/hdf5/reader.ts), so the bench starts from the same numbers.
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
  let workDir: string | null = null;
  let cleanup: (() => Promise<void>) | null = null;
  let opened: Awaited<ReturnType<typeof openScanOrEventsPath>> | null = null;
  try {
    workDir = await mkdtemp(path.join(tmpdir(), `lobeline-bench-${scanId}-`));
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
    opened = await openScanOrEventsPath(scanPath);
    if (!opened.ok) {
      throw new AppError('conflict:scan', {
        message: 'The raw file could not be read.',
        details: opened.problems.map((p) => p.message),
      });
    }
    if (opened.kind === 'events') {
      throw new AppError('conflict:scan', {
        message: 'The calibration bench works on detector images; this scan is an event list.',
      });
    }
    const meta = opened.scan.meta;
    if (step >= meta.shape.nStep) {
      throw new AppError('conflict:scan', {
        message: `The scan has ${meta.shape.nStep} step(s) (0…${meta.shape.nStep - 1}); step ${step} does not exist.`,
      });
    }
    const counts = opened.scan.readFrame(step);
    const background = opened.scan.readBackground(step);
    return { scanId, sha256: file.sha256, meta, step, counts, background };
  } finally {
    try {
      if (opened?.ok) opened.scan.close();
    } catch (err) {
      log.warn('bench frame: close failed', { scanId, err });
    }
    if (cleanup) await cleanup().catch(() => undefined);
    if (workDir) await rm(workDir, { recursive: true, force: true }).catch(() => undefined);
  }
}
