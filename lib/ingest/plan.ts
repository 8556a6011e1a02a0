/**
 * How a file travels to the raw bucket: one presigned PUT up to 16 MiB, else a multipart upload whose part size
 * follows from the file size. Pure (no imports): the server decides, the browser follows the plan it is given.
 *
 * S3 rules (an open interface): parts are numbered 1…10 000; every part but the last is at least 5 MiB; a part is
 * at most 5 GiB; an object is at most 5 TiB. Lobeline's own choices: parts of at least 8 MiB, grown in whole MiB
 * so that a file never needs more than 10 000 parts.
 */

// VARIABLES //

const MiB = 1024 * 1024;

/** Files up to this size go in one presigned PUT. */
export const SINGLE_PUT_MAX_BYTES = 16 * MiB;
/** Smallest part Lobeline uses (S3 allows 5 MiB). */
export const MIN_PART_BYTES = 8 * MiB;
/** S3's largest part. */
export const MAX_PART_BYTES = 5 * 1024 * MiB;
/** S3's part-count limit. */
export const MAX_PARTS = 10_000;
/** Largest file Lobeline accepts (S3's object limit, 5 TiB). */
export const MAX_FILE_BYTES = 5 * 1024 * 1024 * MiB;
/** Parts sent at the same time by one browser for one file. */
export const PARALLEL_PARTS = 4;
/** Validity of every presigned URL Lobeline hands out, seconds (≤ 15 min). */
export const PRESIGN_SECONDS = 10 * 60;
/** Most part URLs issued in one request. */
export const MAX_PART_URLS_PER_REQUEST = 64;

// TYPES //

export type UploadPlan =
  | { mode: 'single'; sizeBytes: number }
  | { mode: 'multipart'; sizeBytes: number; partSize: number; partCount: number };

// FUNCTIONS //

/**
 * Part size for a multipart upload: 8 MiB, or the smallest whole number of MiB that keeps the part count
 * within 10 000.
 *
 * @param sizeBytes - file size in bytes (> 16 MiB)
 * @returns part size in bytes
 * @example choosePartSize(1024 ** 3) // returns 8388608 (128 parts of 8 MiB)
 */
export function choosePartSize(sizeBytes: number): number {
  const needed = Math.ceil(sizeBytes / MAX_PARTS);
  return Math.max(MIN_PART_BYTES, Math.ceil(needed / MiB) * MiB);
}

/**
 * The plan for a file of `sizeBytes`.
 *
 * @throws RangeError for a size that is not a whole number of bytes in 0…5 TiB
 */
export function planUpload(sizeBytes: number): UploadPlan {
  if (!Number.isSafeInteger(sizeBytes) || sizeBytes < 0 || sizeBytes > MAX_FILE_BYTES) {
    throw new RangeError(`file size ${sizeBytes} is not a whole number of bytes from 0 to 5 TiB`);
  }
  if (sizeBytes <= SINGLE_PUT_MAX_BYTES) return { mode: 'single', sizeBytes };
  const partSize = choosePartSize(sizeBytes);
  return { mode: 'multipart', sizeBytes, partSize, partCount: Math.ceil(sizeBytes / partSize) };
}

/**
 * Byte range of part `partNumber` (1-based): start inclusive, end exclusive.
 *
 * @throws RangeError when the part does not exist
 */
export function partRange(
  sizeBytes: number,
  partSize: number,
  partNumber: number,
): { start: number; end: number; length: number } {
  const count = Math.ceil(sizeBytes / partSize);
  if (!Number.isInteger(partNumber) || partNumber < 1 || partNumber > count) {
    throw new RangeError(`part ${partNumber} does not exist (the file has ${count} parts)`);
  }
  const start = (partNumber - 1) * partSize;
  const end = Math.min(sizeBytes, start + partSize);
  return { start, end, length: end - start };
}

/** Delay before retry `attempt` (1, 2, …) of a failed part: exponential with jitter, capped at 30 s. */
export function retryDelayMs(attempt: number, random: () => number = Math.random): number {
  const base = Math.min(30_000, 500 * 2 ** (attempt - 1));
  return Math.round(base * (0.75 + 0.5 * random()));
}

/** Prefix of the keys that presigned URLs name (where browsers put bytes). */
export const INCOMING_PREFIX = 'incoming/';

/**
 * The key a verified raw file is kept under. The bytes are copied there inside the store before they are hashed
 * and read, and no presigned URL ever names this key: nothing a browser was handed can change what the catalogue
 * points at once it is verified. (Uploads started before keys had the `incoming/` prefix get a `.verified` suffix.)
 *
 * @example storedKeyFor('incoming/amo/7/0b1c….h5') // returns 'raw/amo/7/0b1c….h5'
 */
export function storedKeyFor(uploadKey: string): string {
  return uploadKey.startsWith(INCOMING_PREFIX)
    ? `raw/${uploadKey.slice(INCOMING_PREFIX.length)}`
    : `${uploadKey.replace(/\.h5$/, '')}.verified.h5`;
}
