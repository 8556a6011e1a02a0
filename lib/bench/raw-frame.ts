// The raw frame of a scan for the calibration bench (issue 15): the stored file is downloaded to a scratch folder
// with its size and SHA-256 checked, the analyst's metadata correction (if any) applied to a copy, one step's frame
// (and its background) read, and the scratch folder removed. Event files have no frames and are refused.
import 'server-only';
import { mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { AppError } from '@/lib/errors';
import { applyMetadataOverride } from '@/lib/ingest/override';
import { metadataOverrideSchema } from '@/lib/ingest/schemas';
import { downloadVerified, StoredFileMismatchError } from '@/lib/ingest/verify';
import { RawFile, Scan } from '@/models';
import type { ScanMetadata } from '@/reduction/formats';
import { loadH5wasmNode, openScanOrEventsPath } from '@/reduction/hdf5/node';

export interface BenchRawFrame {
  meta: ScanMetadata;
  step: number;
  nX: number;
  nY: number;
  counts: Float64Array;
  background: Float64Array | null;
  shots: number | null;
  backgroundShots: number | null;
}

/**
 * Reads step `step` of a scan's raw file (the caller has checked access).
 *
 * @throws AppError not_found:scan / conflict:scan (file gone, quarantined, event file, step out of range)
 */
export async function readBenchFrame(scanId: number, step: number): Promise<BenchRawFrame> {
  const scan = await Scan.findByPk(scanId);
  if (!scan) throw new AppError('not_found:scan');
  const file = scan.raw_file_id ? await RawFile.findByPk(scan.raw_file_id) : null;
  if (!file || file.deleted_at) {
    throw new AppError('conflict:scan', { message: 'The raw file of this scan is no longer stored.' });
  }
  if (file.status === 'quarantined') {
    throw new AppError('conflict:scan', { message: 'The raw file is quarantined; release it before using the bench.' });
  }
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
      if (err instanceof StoredFileMismatchError) {
        throw new AppError('conflict:scan', { message: 'The stored raw file does not match its catalogue entry.' });
      }
      throw err;
    }
    let scanPath = rawPath;
    if (file.metadata_override) {
      const parsed = metadataOverrideSchema.safeParse(file.metadata_override);
      if (!parsed.success) {
        throw new AppError('conflict:scan', { message: 'The corrected metadata of this file are not valid any more.' });
      }
      const applied = await applyMetadataOverride(await loadH5wasmNode(), rawPath, parsed.data);
      if (!applied.ok) {
        throw new AppError('conflict:scan', { message: `The corrected metadata could not be applied.` });
      }
      cleanup = applied.cleanup;
      scanPath = applied.path;
    }
    const opened = await openScanOrEventsPath(scanPath, {});
    if (!opened.ok) throw new AppError('conflict:scan', { message: 'The raw file cannot be read as a scan file.' });
    const scanFile = opened.scan;
    try {
      if (!('readFrame' in scanFile)) {
        throw new AppError('conflict:scan', {
          message: 'This scan is an event list; the bench works on image frames (reduce it to an image first).',
        });
      }
      const meta = scanFile.meta;
      const nStep = meta.shape.nStep;
      if (step >= nStep) {
        throw new AppError('bad_request:scan', {
          message: `This scan has ${nStep} step(s); step ${step} does not exist.`,
        });
      }
      const counts = scanFile.readFrame(step);
      const background = scanFile.readBackground(step);
      return {
        meta,
        step,
        nX: meta.shape.nX,
        nY: meta.shape.nY,
        counts,
        background,
        shots: meta.shots[step] ?? null,
        backgroundShots: meta.background
          ? (meta.background.shots[meta.background.layout === 'single' ? 0 : step] ?? null)
          : null,
      };
    } finally {
      scanFile.close();
    }
  } finally {
    if (cleanup) await cleanup().catch(() => {});
    await rm(workDir, { recursive: true, force: true });
  }
}
