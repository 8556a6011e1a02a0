/**
 * Server-side verification of a stored raw file (C2): stream the object once from S3, hashing it with node:crypto
 * while writing a scratch copy, then run the scan-file reader's full validation on that copy (every metadata rule,
 * then every frame and background frame read and checked). Node only.
 */
import { createHash, randomBytes } from 'node:crypto';
import { createWriteStream } from 'node:fs';
import { mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { Transform } from 'node:stream';
import { pipeline } from 'node:stream/promises';
import { getObjectRange, getObjectStream, headObject } from '@/lib/storage/s3';
import type { ScanMetadata } from '@/reduction/formats';
import { type EventScanFile, openScanOrEvents } from '@/reduction/hdf5/event-reader';
import { loadH5wasmNode } from '@/reduction/hdf5/node';
import { ScanReadError } from '@/reduction/hdf5/problems';
import { applyMetadataOverride } from './override';
import type { MetadataOverride } from './schemas';

// TYPES //

export interface ScanValidation {
  ok: boolean;
  /** The reader's sentences (`path: rule`), empty when ok. */
  problems: string[];
  warnings: string[];
  metadata: ScanMetadata | null;
}

// FUNCTIONS //

/**
 * Streams an object to `destPath` and hashes it on the way.
 *
 * @returns SHA-256 (hex) and the number of bytes read
 */
export async function downloadAndHash(
  bucket: string,
  key: string,
  destPath: string,
): Promise<{ sha256: string; bytes: number }> {
  const { body } = await getObjectStream(bucket, key);
  const hash = createHash('sha256');
  let bytes = 0;
  const tap = new Transform({
    transform(chunk: Buffer, _enc, done) {
      hash.update(chunk);
      bytes += chunk.length;
      done(null, chunk);
    },
  });
  await pipeline(body, tap, createWriteStream(destPath));
  return { sha256: hash.digest('hex'), bytes };
}

/** The stored bytes differ from what the catalogue recorded when the file was verified. */
export class StoredFileMismatchError extends Error {
  constructor(
    readonly expected: { sha256: string; sizeBytes: number },
    readonly found: { sha256: string; bytes: number },
  ) {
    super(
      found.bytes !== expected.sizeBytes
        ? `The stored raw file has ${found.bytes} bytes, but ${expected.sizeBytes} were verified and catalogued; it was not used.`
        : `The stored raw file's SHA-256 is ${found.sha256}, not the catalogued ${expected.sha256}: its bytes changed after verification and were not used. Tell the data steward.`,
    );
    this.name = 'StoredFileMismatchError';
  }
}

/**
 * Streams a catalogued object to `destPath` and checks its size and SHA-256 against the catalogue on the way
 * (where the worker reads a raw file).
 *
 * @throws StoredFileMismatchError when the bytes are not the verified ones
 */
export async function downloadVerified(
  bucket: string,
  key: string,
  destPath: string,
  expected: { sha256: string; sizeBytes: number },
): Promise<{ sha256: string; bytes: number }> {
  const got = await downloadAndHash(bucket, key, destPath);
  if (got.bytes !== expected.sizeBytes || got.sha256 !== expected.sha256) {
    throw new StoredFileMismatchError(expected, got);
  }
  return got;
}

/** Range size and number of ranges in flight for `hashObjectRanged`. */
const RANGE_BYTES = 16 * 1024 * 1024;
const RANGES_IN_FLIGHT = 4;

/**
 * SHA-256 of a stored object read as parallel byte ranges (hashed in order as they arrive). One GET stream from a
 * single-threaded S3 service is slower than the hash itself; several ranges in flight keep the pipe full.
 * Memory stays bounded by RANGES_IN_FLIGHT × RANGE_BYTES.
 *
 * @param onChunk - optional consumer of each range in order (e.g. to write a scratch copy)
 */
export async function hashObjectRanged(
  bucket: string,
  key: string,
  onChunk?: (bytes: Uint8Array) => Promise<void> | void,
): Promise<{ sha256: string; bytes: number }> {
  const { size } = await headObject(bucket, key);
  const hash = createHash('sha256');
  const count = Math.ceil(size / RANGE_BYTES);
  const pending = new Map<number, Promise<Uint8Array>>();
  const fetchRange = (i: number) =>
    getObjectRange(bucket, key, i * RANGE_BYTES, Math.min(size, (i + 1) * RANGE_BYTES) - 1);
  let bytes = 0;
  for (let i = 0; i < count; i++) {
    for (let j = i; j < Math.min(count, i + RANGES_IN_FLIGHT); j++) if (!pending.has(j)) pending.set(j, fetchRange(j));
    const chunk = await pending.get(i)!;
    pending.delete(i);
    hash.update(chunk);
    bytes += chunk.length;
    await onChunk?.(chunk);
  }
  return { sha256: hash.digest('hex'), bytes };
}

/** SHA-256 of a stored object without keeping a copy, as one GET stream (fixity, benchmarks). */
export async function hashObject(bucket: string, key: string): Promise<{ sha256: string; bytes: number }> {
  const { body } = await getObjectStream(bucket, key);
  const hash = createHash('sha256');
  let bytes = 0;
  for await (const chunk of body as AsyncIterable<Buffer>) {
    hash.update(chunk);
    bytes += chunk.length;
  }
  return { sha256: hash.digest('hex'), bytes };
}

/**
 * The reader's full validation of a scan file on disk: metadata rules first, then every frame (counts and
 * background) read through the reader and checked for decode failures, NaN, infinities and negative counts.
 *
 * @param filePath - local path
 * @param override - analyst-corrected metadata, applied to a scratch copy before validation (see override.ts)
 */
export async function validateScanPath(filePath: string, override?: MetadataOverride): Promise<ScanValidation> {
  const rt = await loadH5wasmNode();
  let target = filePath;
  let cleanup: (() => Promise<void>) | null = null;
  if (override) {
    const applied = await applyMetadataOverride(rt, filePath, override);
    if (!applied.ok) return { ok: false, problems: applied.problems, warnings: [], metadata: null };
    target = applied.path;
    cleanup = applied.cleanup;
  }
  try {
    const opened = openScanOrEvents(rt, target);
    if (!opened.ok) {
      return { ok: false, problems: opened.problems.map((p) => p.message), warnings: opened.warnings, metadata: null };
    }
    if (opened.kind === 'events') {
      const problems = checkEveryEvent(opened.scan);
      return { ok: problems.length === 0, problems, warnings: opened.warnings, metadata: opened.scan.meta };
    }
    const scan = opened.scan;
    const problems: string[] = [];
    try {
      const { nStep, nY, nX } = scan.meta.shape;
      const frame = new Float64Array(nY * nX);
      const bg = scan.meta.background ? new Float64Array(nY * nX) : null;
      for (let k = 0; k < nStep; k++) {
        try {
          scan.readFrame(k, frame);
          if (bg) scan.readBackground(k, bg);
        } catch (err) {
          if (err instanceof ScanReadError) problems.push(err.problem.message);
          else throw err;
          if (problems.length >= 10) break;
        }
      }
    } finally {
      scan.close();
    }
    return { ok: problems.length === 0, problems, warnings: opened.warnings, metadata: scan.meta };
  } finally {
    await cleanup?.();
  }
}

/** Events read per chunk by the upload check (bounded memory: 3 × 8 bytes × this). */
const CHECK_CHUNK_EVENTS = 1_000_000;

/**
 * Reads every event of an event file in chunks (FORMATS §1.1: never all at once) and checks that it decodes and
 * that x, y and tof are finite numbers, as every frame of an image file is checked. Closes the file.
 */
function checkEveryEvent(scan: EventScanFile): string[] {
  const problems: string[] = [];
  try {
    const n = scan.events.nEvents;
    for (let a = 0; a < n && problems.length < 10; a += CHECK_CHUNK_EVENTS) {
      let chunk: ReturnType<EventScanFile['readEvents']>;
      try {
        chunk = scan.readEvents(a, Math.min(CHECK_CHUNK_EVENTS, n - a));
      } catch (err) {
        if (err instanceof ScanReadError) {
          problems.push(err.problem.message);
          continue;
        }
        throw err;
      }
      for (const [name, arr] of [
        ['x', chunk.x],
        ['y', chunk.y],
        ['tof', chunk.tof],
      ] as const) {
        for (let i = 0; i < arr.length; i++) {
          if (!Number.isFinite(arr[i] as number)) {
            problems.push(`/entry/events/${name}: event ${a + i} is ${arr[i]}; every value must be a finite number`);
            break;
          }
        }
      }
    }
  } finally {
    scan.close();
  }
  return problems;
}

/** A fresh scratch directory under the OS temp folder (removed by the returned function). */
export async function scratchDir(): Promise<{
  dir: string;
  file: (name: string) => string;
  remove: () => Promise<void>;
}> {
  const dir = await mkdtemp(path.join(tmpdir(), `lobeline-ingest-${randomBytes(3).toString('hex')}-`));
  return {
    dir,
    file: (name) => path.join(dir, name),
    remove: () => rm(dir, { recursive: true, force: true }),
  };
}
