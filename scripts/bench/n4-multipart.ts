/**
 * N4: a 1 GiB file uploaded through presigned multipart with parallel parts to the local S3 service, compared with
 * plain copies of the same bytes on this machine: `cp` to another file, and one plain HTTP PUT stream (a single
 * presigned PUT) to the same S3 service over loopback.
 *
 *   tsx scripts/bench/n4-multipart.ts [--mb 1024] [--parallel 4]
 *
 * The multipart run follows the browser's plan (lib/ingest/plan.ts: 8 MiB parts for 1 GiB, 4 in flight), with one
 * presigned URL per part (signed Content-Length), then CompleteMultipartUpload, and checks the stored size. It
 * starts its own S3 service on a free port (see n3-sha256.ts) and removes everything afterwards.
 */
import { execFileSync } from 'node:child_process';
import { createReadStream } from 'node:fs';
import http from 'node:http';
import path from 'node:path';
import { parseArgs } from 'node:util';
import { randomFile, startBenchS3 } from './n3-sha256';

/** One PUT streaming a file (or part of it) with an explicit Content-Length. */
function putStream(
  url: string,
  file: string,
  start: number,
  length: number,
): Promise<{ status: number; etag: string }> {
  return new Promise((resolve, reject) => {
    const u = new URL(url);
    const req = http.request(
      {
        host: u.hostname,
        port: u.port,
        path: `${u.pathname}${u.search}`,
        method: 'PUT',
        headers: { 'content-length': length },
      },
      (res) => {
        res.resume();
        res.on('end', () => resolve({ status: res.statusCode ?? 0, etag: String(res.headers.etag ?? '') }));
      },
    );
    req.on('error', reject);
    if (length === 0) req.end();
    else createReadStream(file, { start, end: start + length - 1, highWaterMark: 1024 * 1024 }).pipe(req);
  });
}

async function main(): Promise<void> {
  const { values } = parseArgs({
    options: { mb: { type: 'string', default: '1024' }, parallel: { type: 'string', default: '4' } },
  });
  const mb = Number(values.mb);
  const parallel = Number(values.parallel);
  const bytes = mb * 1024 * 1024;
  const s3 = await startBenchS3();
  const file = path.join(s3.dir, 'scan.bin');
  try {
    await randomFile(file, bytes);
    const storage = await import('@/lib/storage/s3');
    const { planUpload, partRange } = await import('@/lib/ingest/plan');
    const bucket = 'bench-raw';

    // cp of the same bytes (page cache warm for all three: the file was just written)
    const t0 = performance.now();
    execFileSync('cp', [file, path.join(s3.dir, 'copy.bin')]);
    const cpMs = performance.now() - t0;

    // one plain HTTP PUT stream
    const singleUrl = await storage.presignPut({
      bucket,
      key: 'bench/single.bin',
      contentLength: bytes,
      expiresIn: 900,
    });
    const t1 = performance.now();
    const single = await putStream(singleUrl, file, 0, bytes);
    const singleMs = performance.now() - t1;
    if (single.status !== 200) throw new Error(`single PUT answered ${single.status}`);

    // presigned multipart, parts in parallel
    const plan = planUpload(bytes);
    if (plan.mode !== 'multipart') throw new Error('file too small for multipart');
    const key = 'bench/multipart.bin';
    const t2 = performance.now();
    const { uploadId } = await storage.createMultipart({ bucket, key });
    let next = 1;
    const lane = async () => {
      while (next <= plan.partCount) {
        const n = next++;
        const r = partRange(bytes, plan.partSize, n);
        const url = await storage.presignUploadPart({
          bucket,
          key,
          uploadId,
          partNumber: n,
          contentLength: r.length,
          expiresIn: 600,
        });
        const res = await putStream(url, file, r.start, r.length);
        if (res.status !== 200) throw new Error(`part ${n} answered ${res.status}`);
      }
    };
    await Promise.all(Array.from({ length: parallel }, lane));
    const tc = performance.now();
    const parts = await storage.listParts({ bucket, key, uploadId });
    await storage.completeMultipart({ bucket, key, uploadId, parts });
    const multiMs = performance.now() - t2;
    const completeMs = performance.now() - tc;
    const head = await storage.headObject(bucket, key);
    if (head.size !== bytes) throw new Error(`stored ${head.size} bytes, expected ${bytes}`);
    storage.closeS3Client();

    const rate = (ms: number) => bytes / 1024 / 1024 / (ms / 1000);
    console.log(
      `N4 ${mb} MiB upload to the local S3 service (@20minutes/s3rver, SigV4) — ${plan.partCount} parts of ${plan.partSize / 1024 / 1024} MiB, ${parallel} in flight`,
    );
    console.log('method                                    time s    MiB/s   time / multipart');
    for (const [name, ms] of [
      ['presigned multipart, parallel parts', multiMs],
      ['one plain HTTP PUT stream (loopback)', singleMs],
      ['cp (local file copy)', cpMs],
    ] as const) {
      console.log(
        `${name.padEnd(41)} ${(ms / 1000).toFixed(2).padStart(6)} ${rate(ms).toFixed(0).padStart(8)}   ${(ms / multiMs).toFixed(2).padStart(6)}`,
      );
    }
    console.log(
      `  of which ListParts + CompleteMultipartUpload (the service joins the parts): ${(completeMs / 1000).toFixed(2)} s`,
    );
    console.log(
      `N4 ratios: multipart time / single PUT time = ${(multiMs / singleMs).toFixed(2)}; multipart time / cp time = ${(multiMs / cpMs).toFixed(2)} (stored size verified: ${head.size} bytes)`,
    );
  } finally {
    await s3.stop();
  }
}

main().catch((err) => {
  console.error(`n4-multipart: ${(err as Error).stack ?? err}`);
  process.exit(1);
});
