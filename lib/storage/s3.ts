// S3 access for the web server, the worker and the scripts (Node only; no 'server-only' marker because tsx
// scripts import it too). One client from the environment; every SDK failure becomes an AppError
// `not_found:storage` or `unavailable:storage`, and is logged.
import type { Readable } from 'node:stream';
import {
  AbortMultipartUploadCommand,
  CompleteMultipartUploadCommand,
  CopyObjectCommand,
  CreateMultipartUploadCommand,
  DeleteObjectCommand,
  GetObjectCommand,
  HeadObjectCommand,
  ListPartsCommand,
  PutObjectCommand,
  S3Client,
  type StorageClass,
  UploadPartCommand,
  UploadPartCopyCommand,
} from '@aws-sdk/client-s3';
import { getSignedUrl } from '@aws-sdk/s3-request-presigner';
import { getEnv } from '@/lib/env';
import { AppError } from '@/lib/errors';
import { log } from '@/lib/log';

const slog = log.child({ surface: 'storage' });

/** Longest validity we hand out for a presigned URL (the S3 limit is 7 days; we stay far below). */
export const MAX_PRESIGN_SECONDS = 60 * 60;
export const DEFAULT_PRESIGN_SECONDS = 15 * 60;

type Cache = { client?: S3Client };
const cache = globalThis as typeof globalThis & { __lobelineS3?: Cache };
if (!cache.__lobelineS3) cache.__lobelineS3 = {};
const state: Cache = cache.__lobelineS3;

export function getS3Client(): S3Client {
  if (!state.client) {
    const env = getEnv();
    state.client = new S3Client({
      region: env.S3_REGION,
      endpoint: env.S3_ENDPOINT,
      forcePathStyle: env.S3_FORCE_PATH_STYLE,
      credentials: { accessKeyId: env.S3_ACCESS_KEY_ID, secretAccessKey: env.S3_SECRET_ACCESS_KEY },
      requestChecksumCalculation: 'WHEN_REQUIRED',
      responseChecksumValidation: 'WHEN_REQUIRED',
      // Standard retry mode (jittered exponential back-off) over five attempts rides out a service that restarts;
      // longer outages are ridden out by the reduction queue's own back-off (lib/queue/reduction-queue.ts).
      retryMode: 'standard',
      maxAttempts: 5,
    });
  }
  return state.client;
}

/** For tests and shutdown paths. */
export function closeS3Client(): void {
  state.client?.destroy();
  state.client = undefined;
}

export interface Buckets {
  raw: string;
  derived: string;
  archive: string;
}

export function buckets(): Buckets {
  const env = getEnv();
  return { raw: env.S3_BUCKET_RAW, derived: env.S3_BUCKET_DERIVED, archive: env.S3_BUCKET_ARCHIVE };
}

const NOT_FOUND_NAMES = new Set(['NoSuchKey', 'NotFound', 'NoSuchUpload', 'NoSuchBucket']);

/** Maps an SDK failure to an AppError (and logs it). */
export function storageError(err: unknown, op: string, where: Record<string, unknown>): AppError {
  if (err instanceof AppError) return err;
  const e = err as { name?: string; Code?: string; $metadata?: { httpStatusCode?: number } };
  const name = e?.name ?? e?.Code ?? 'Error';
  const status = e?.$metadata?.httpStatusCode;
  const notFound = NOT_FOUND_NAMES.has(name) || status === 404;
  const code = notFound ? 'not_found:storage' : 'unavailable:storage';
  if (notFound) slog.info('storage object not found', { op, ...where, name, status });
  else slog.error('storage operation failed', { op, ...where, name, status, err });
  return new AppError(code, { cause: err, context: { op, ...where, s3Error: name, httpStatus: status } });
}

async function run<T>(op: string, where: Record<string, unknown>, fn: () => Promise<T>): Promise<T> {
  try {
    return await fn();
  } catch (err) {
    throw storageError(err, op, where);
  }
}

function checkExpiry(expiresIn: number | undefined): number {
  const s = expiresIn ?? DEFAULT_PRESIGN_SECONDS;
  if (!Number.isInteger(s) || s < 1 || s > MAX_PRESIGN_SECONDS) {
    throw new AppError('internal:storage', { message: `presign expiry must be 1..${MAX_PRESIGN_SECONDS} s` });
  }
  return s;
}

function checkLength(contentLength: number): number {
  if (!Number.isSafeInteger(contentLength) || contentLength < 0) {
    throw new AppError('bad_request:upload', { details: ['The file size is not a valid number of bytes.'] });
  }
  return contentLength;
}

export interface ObjectInfo {
  size: number;
  etag?: string;
  contentType?: string;
  lastModified?: Date;
  storageClass?: string;
  metadata: Record<string, string>;
}

export async function headObject(bucket: string, key: string): Promise<ObjectInfo> {
  return run('headObject', { bucket, key }, async () => {
    const out = await getS3Client().send(new HeadObjectCommand({ Bucket: bucket, Key: key }));
    return {
      size: out.ContentLength ?? 0,
      etag: out.ETag,
      contentType: out.ContentType,
      lastModified: out.LastModified,
      storageClass: out.StorageClass,
      metadata: out.Metadata ?? {},
    };
  });
}

/** The whole object as a Node stream (for hashing, copying, serving). */
export async function getObjectStream(bucket: string, key: string): Promise<{ body: Readable; size: number }> {
  return run('getObjectStream', { bucket, key }, async () => {
    const out = await getS3Client().send(new GetObjectCommand({ Bucket: bucket, Key: key }));
    if (!out.Body) throw new Error('empty response body');
    return { body: out.Body as Readable, size: out.ContentLength ?? 0 };
  });
}

/** Bytes start..end inclusive (HTTP Range semantics), e.g. to read an HDF5 file part by part. */
export async function getObjectRange(bucket: string, key: string, start: number, end: number): Promise<Uint8Array> {
  if (!Number.isSafeInteger(start) || !Number.isSafeInteger(end) || start < 0 || end < start) {
    throw new AppError('internal:storage', { message: `invalid byte range ${start}-${end}` });
  }
  return run('getObjectRange', { bucket, key, start, end }, async () => {
    const out = await getS3Client().send(
      new GetObjectCommand({ Bucket: bucket, Key: key, Range: `bytes=${start}-${end}` }),
    );
    if (!out.Body) throw new Error('empty response body');
    const bytes = await out.Body.transformToByteArray();
    const expected = Math.min(end - start + 1, out.ContentLength ?? bytes.length);
    if (bytes.length !== expected) throw new Error(`short read: ${bytes.length} of ${expected} bytes`);
    return bytes;
  });
}

export interface PutObjectInput {
  bucket: string;
  key: string;
  body: Uint8Array | string | Readable;
  contentType?: string;
  /** Needed when body is a stream. */
  contentLength?: number;
  metadata?: Record<string, string>;
  storageClass?: StorageClass;
}

export async function putObject(input: PutObjectInput): Promise<{ etag?: string }> {
  const { bucket, key } = input;
  return run('putObject', { bucket, key }, async () => {
    const out = await getS3Client().send(
      new PutObjectCommand({
        Bucket: bucket,
        Key: key,
        Body: input.body,
        ContentType: input.contentType,
        ContentLength: input.contentLength,
        Metadata: input.metadata,
        StorageClass: input.storageClass,
      }),
    );
    return { etag: out.ETag };
  });
}

function copySource(bucket: string, key: string): string {
  return `${bucket}/${key.split('/').map(encodeURIComponent).join('/')}`;
}

export async function copyObject(input: {
  fromBucket: string;
  fromKey: string;
  toBucket: string;
  toKey: string;
  storageClass?: StorageClass;
}): Promise<{ etag?: string }> {
  return run('copyObject', input, async () => {
    const out = await getS3Client().send(
      new CopyObjectCommand({
        Bucket: input.toBucket,
        Key: input.toKey,
        CopySource: copySource(input.fromBucket, input.fromKey),
        StorageClass: input.storageClass,
      }),
    );
    return { etag: out.CopyObjectResult?.ETag };
  });
}

/** S3's largest single CopyObject (5 GiB); larger objects are copied part by part (UploadPartCopy). */
export const MAX_SINGLE_COPY_BYTES = 5 * 1024 * 1024 * 1024;

/**
 * A server-side copy of an object of `sizeBytes` within the store, of any size: one CopyObject up to
 * `singleMaxBytes` (default S3's 5 GiB limit), else a multipart upload of UploadPartCopy ranges of `partBytes`
 * (S3 rules: parts ≥ 5 MiB but the last, ≤ 10 000 parts). The bytes never pass through this process.
 */
export async function copyObjectAnySize(input: {
  fromBucket: string;
  fromKey: string;
  toBucket: string;
  toKey: string;
  sizeBytes: number;
  singleMaxBytes?: number;
  partBytes?: number;
  /** Sent with the copy (CopyObject, or the multipart upload's creation). */
  storageClass?: StorageClass;
  /** Awaited after each copied part (multipart only): for progress reports and for the interrupted-copy tests. */
  onPart?: (done: { partNumber: number; parts: number; bytes: number }) => Promise<void> | void;
}): Promise<void> {
  const singleMax = input.singleMaxBytes ?? MAX_SINGLE_COPY_BYTES;
  if (input.sizeBytes <= singleMax) {
    await copyObject(input);
    return;
  }
  const partBytes = Math.max(
    input.partBytes ?? 512 * 1024 * 1024,
    Math.ceil(input.sizeBytes / 10_000),
    5 * 1024 * 1024,
  );
  const { uploadId } = await createMultipart({
    bucket: input.toBucket,
    key: input.toKey,
    storageClass: input.storageClass,
  });
  const where = { bucket: input.toBucket, key: input.toKey };
  const partCount = Math.ceil(input.sizeBytes / partBytes);
  try {
    const parts: { partNumber: number; etag: string }[] = [];
    for (let start = 0, n = 1; start < input.sizeBytes; start += partBytes, n++) {
      const end = Math.min(input.sizeBytes, start + partBytes) - 1;
      const etag = await run('uploadPartCopy', { ...where, partNumber: n }, async () => {
        const out = await getS3Client().send(
          new UploadPartCopyCommand({
            Bucket: input.toBucket,
            Key: input.toKey,
            UploadId: uploadId,
            PartNumber: n,
            CopySource: copySource(input.fromBucket, input.fromKey),
            CopySourceRange: `bytes=${start}-${end}`,
          }),
        );
        if (!out.CopyPartResult?.ETag) throw new Error('no ETag in the UploadPartCopy answer');
        return out.CopyPartResult.ETag;
      });
      parts.push({ partNumber: n, etag });
      await input.onPart?.({ partNumber: n, parts: partCount, bytes: end + 1 });
    }
    await completeMultipart({ ...where, uploadId, parts });
  } catch (err) {
    await abortMultipart({ ...where, uploadId }).catch(() => undefined);
    throw err;
  }
}

export async function deleteObject(bucket: string, key: string): Promise<void> {
  await run('deleteObject', { bucket, key }, async () => {
    await getS3Client().send(new DeleteObjectCommand({ Bucket: bucket, Key: key }));
  });
}

/** A URL for one PUT of exactly `contentLength` bytes to one key; the length is part of the signature. */
export async function presignPut(input: {
  bucket: string;
  key: string;
  contentLength: number;
  expiresIn?: number;
  contentType?: string;
}): Promise<string> {
  const expiresIn = checkExpiry(input.expiresIn);
  const contentLength = checkLength(input.contentLength);
  return run('presignPut', { bucket: input.bucket, key: input.key }, () =>
    getSignedUrl(
      getS3Client(),
      new PutObjectCommand({
        Bucket: input.bucket,
        Key: input.key,
        ContentLength: contentLength,
        ContentType: input.contentType,
      }),
      { expiresIn, signableHeaders: new Set(['content-length', ...(input.contentType ? ['content-type'] : [])]) },
    ),
  );
}

/**
 * `Content-Disposition: attachment` for a presigned download, quoted-string form with a plain-ASCII name. The
 * extended form (`filename*=UTF-8''…`, RFC 6266) carries `'` and `*`, which S3 services do not all percent-encode
 * alike when they recompute the SigV4 canonical query (RFC 3986 leaves them unreserved in some encoders): the
 * local S3 service then answered SignatureDoesNotMatch. Lobeline's names are ASCII; anything else becomes `_`.
 */
export function attachmentDisposition(name: string): string {
  const safe = name.replace(/[^A-Za-z0-9._-]/g, '_').slice(0, 200) || 'download';
  return `attachment; filename="${safe}"`;
}

export async function presignGet(input: {
  bucket: string;
  key: string;
  expiresIn?: number;
  /** Suggested file name for a download (Content-Disposition: attachment). */
  downloadName?: string;
}): Promise<string> {
  const expiresIn = checkExpiry(input.expiresIn);
  const disposition = input.downloadName ? attachmentDisposition(input.downloadName) : undefined;
  return run('presignGet', { bucket: input.bucket, key: input.key }, () =>
    getSignedUrl(
      getS3Client(),
      new GetObjectCommand({ Bucket: input.bucket, Key: input.key, ResponseContentDisposition: disposition }),
      { expiresIn },
    ),
  );
}

export async function createMultipart(input: {
  bucket: string;
  key: string;
  contentType?: string;
  metadata?: Record<string, string>;
  storageClass?: StorageClass;
}): Promise<{ uploadId: string }> {
  return run('createMultipart', { bucket: input.bucket, key: input.key }, async () => {
    const out = await getS3Client().send(
      new CreateMultipartUploadCommand({
        Bucket: input.bucket,
        Key: input.key,
        ContentType: input.contentType,
        Metadata: input.metadata,
        StorageClass: input.storageClass,
      }),
    );
    if (!out.UploadId) throw new Error('no UploadId in response');
    return { uploadId: out.UploadId };
  });
}

/** A URL for one part (1..10000) of exactly `contentLength` bytes of one multipart upload. */
export async function presignUploadPart(input: {
  bucket: string;
  key: string;
  uploadId: string;
  partNumber: number;
  contentLength: number;
  expiresIn?: number;
}): Promise<string> {
  const expiresIn = checkExpiry(input.expiresIn);
  const contentLength = checkLength(input.contentLength);
  if (!Number.isInteger(input.partNumber) || input.partNumber < 1 || input.partNumber > 10_000) {
    throw new AppError('bad_request:upload', { details: ['Part numbers run from 1 to 10 000.'] });
  }
  return run('presignUploadPart', { bucket: input.bucket, key: input.key, partNumber: input.partNumber }, () =>
    getSignedUrl(
      getS3Client(),
      new UploadPartCommand({
        Bucket: input.bucket,
        Key: input.key,
        UploadId: input.uploadId,
        PartNumber: input.partNumber,
        ContentLength: contentLength,
      }),
      { expiresIn, signableHeaders: new Set(['content-length']) },
    ),
  );
}

export interface UploadedPart {
  partNumber: number;
  etag: string;
  size: number;
}

/** Parts received so far (all pages), sorted by part number. */
export async function listParts(input: { bucket: string; key: string; uploadId: string }): Promise<UploadedPart[]> {
  return run('listParts', { bucket: input.bucket, key: input.key }, async () => {
    const parts: UploadedPart[] = [];
    let marker: string | undefined;
    for (let page = 0; page < 100; page++) {
      const out = await getS3Client().send(
        new ListPartsCommand({
          Bucket: input.bucket,
          Key: input.key,
          UploadId: input.uploadId,
          PartNumberMarker: marker,
        }),
      );
      for (const p of out.Parts ?? []) {
        if (p.PartNumber !== undefined && p.ETag)
          parts.push({ partNumber: p.PartNumber, etag: p.ETag, size: p.Size ?? 0 });
      }
      if (!out.IsTruncated || !out.NextPartNumberMarker) break;
      marker = String(out.NextPartNumberMarker);
    }
    return parts.sort((a, b) => a.partNumber - b.partNumber);
  });
}

export async function completeMultipart(input: {
  bucket: string;
  key: string;
  uploadId: string;
  parts: { partNumber: number; etag: string }[];
}): Promise<{ etag?: string }> {
  const sorted = [...input.parts].sort((a, b) => a.partNumber - b.partNumber);
  return run('completeMultipart', { bucket: input.bucket, key: input.key, parts: sorted.length }, async () => {
    const out = await getS3Client().send(
      new CompleteMultipartUploadCommand({
        Bucket: input.bucket,
        Key: input.key,
        UploadId: input.uploadId,
        MultipartUpload: { Parts: sorted.map((p) => ({ PartNumber: p.partNumber, ETag: p.etag })) },
      }),
    );
    return { etag: out.ETag };
  });
}

export async function abortMultipart(input: { bucket: string; key: string; uploadId: string }): Promise<void> {
  await run('abortMultipart', { bucket: input.bucket, key: input.key }, async () => {
    await getS3Client().send(
      new AbortMultipartUploadCommand({ Bucket: input.bucket, Key: input.key, UploadId: input.uploadId }),
    );
  });
}
