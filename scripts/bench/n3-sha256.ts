/**
 * N3: server-side SHA-256 verification of an uploaded object, against `sha256sum` on the same bytes.
 *
 *   tsx scripts/bench/n3-sha256.ts [--mb 1024]
 *
 * Starts its own S3 service (scripts/local-services.ts: @20minutes/s3rver + SMTP catcher) on free ports with a
 * scratch data folder, stores one object of random bytes, then times (best of 3): the ingest's streaming hash of
 * the stored object (lib/ingest/verify.ts `hashObject`, node:crypto over the S3 GET stream), Debian's
 * `sha256sum` over a local copy, and node:crypto over the local file (the breakdown: hashing vs transport).
 * Prints a table with throughput and ratios; target: streaming ≥ 80 % of sha256sum's speed. Cleans up.
 */
import { type ChildProcess, execFileSync, spawn } from 'node:child_process';
import { createHash, randomBytes } from 'node:crypto';
import { createReadStream, createWriteStream, mkdtempSync, rmSync } from 'node:fs';
import net from 'node:net';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { parseArgs } from 'node:util';

const ROOT = path.resolve(import.meta.dirname, '..', '..');

export async function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const srv = net.createServer();
    srv.once('error', reject);
    srv.listen(0, '127.0.0.1', () => {
      const port = (srv.address() as net.AddressInfo).port;
      srv.close(() => resolve(port));
    });
  });
}

export interface BenchS3 {
  env: Record<string, string>;
  stop: () => Promise<void>;
  dir: string;
}

/** Starts scripts/local-services.ts on free ports with a scratch folder; sets the S3 variables for lib/env. */
export async function startBenchS3(): Promise<BenchS3> {
  const dir = mkdtempSync(path.join(tmpdir(), 'lobeline-bench-s3-'));
  const [s3Port, smtpPort] = [await freePort(), await freePort()];
  const env: Record<string, string> = {
    LOBELINE_DATA_DIR: dir,
    LOBELINE_LOCAL_S3: '1',
    S3_ENDPOINT: `http://127.0.0.1:${s3Port}`,
    S3_REGION: 'us-east-1',
    S3_ACCESS_KEY_ID: 'bench',
    S3_SECRET_ACCESS_KEY: 'bench-secret-key',
    S3_FORCE_PATH_STYLE: 'true',
    S3_BUCKET_RAW: 'bench-raw',
    S3_BUCKET_DERIVED: 'bench-derived',
    S3_BUCKET_ARCHIVE: 'bench-archive',
    APP_ORIGIN: 'http://127.0.0.1:1',
    SMTP_PORT: String(smtpPort),
    MAIL_CATCHER_DIR: path.join(dir, 'mail'),
  };
  const child: ChildProcess = spawn(
    process.execPath,
    ['--import', 'tsx', path.join(ROOT, 'scripts', 'local-services.ts')],
    {
      cwd: ROOT,
      env: { ...process.env, ...env },
      stdio: ['ignore', 'pipe', 'inherit'],
    },
  );
  await new Promise<void>((resolve, reject) => {
    let out = '';
    const t = setTimeout(() => reject(new Error(`S3 service did not start: ${out}`)), 30_000);
    child.stdout?.on('data', (d: Buffer) => {
      out += d.toString();
      if (out.includes('smtp catcher listening')) {
        clearTimeout(t);
        resolve();
      }
    });
    child.once('exit', (code) => reject(new Error(`S3 service exited (${code}): ${out}`)));
  });
  // lib/env needs a complete environment; the values not used by S3 are placeholders.
  Object.assign(process.env, env, {
    NEXTAUTH_URL: 'http://127.0.0.1:1',
    NEXTAUTH_SECRET: 'bench-secret-bench-secret-bench-secret-0000',
    DB_HOST: '127.0.0.1',
    DB_PORT: '1',
    DB_NAME: 'bench',
    DB_USER: 'bench',
    DB_PASSWORD: 'bench',
    REDIS_URL: 'redis://127.0.0.1:1',
    SMTP_HOST: '127.0.0.1',
    MAIL_FROM: 'bench@harbor-point.example',
    LOG_LEVEL: 'error',
  });
  return {
    env,
    dir,
    stop: async () => {
      child.kill('SIGTERM');
      await new Promise((r) => child.once('exit', r));
      rmSync(dir, { recursive: true, force: true });
    },
  };
}

/** Writes `bytes` random bytes to a file in 8 MiB blocks. */
export async function randomFile(file: string, bytes: number): Promise<void> {
  const out = createWriteStream(file);
  const block = randomBytes(8 * 1024 * 1024);
  for (let left = bytes; left > 0; left -= block.length) {
    const chunk = left >= block.length ? block : block.subarray(0, left);
    if (!out.write(chunk)) await new Promise<void>((r) => out.once('drain', () => r()));
  }
  await new Promise<void>((resolve, reject) => {
    out.once('error', reject);
    out.end(() => resolve());
  });
}

async function best<T>(n: number, fn: () => Promise<T>): Promise<{ ms: number; value: T }> {
  let bestMs = Number.POSITIVE_INFINITY;
  let value!: T;
  for (let i = 0; i < n; i++) {
    const t0 = performance.now();
    value = await fn();
    bestMs = Math.min(bestMs, performance.now() - t0);
  }
  return { ms: bestMs, value };
}

async function main(): Promise<void> {
  const { values } = parseArgs({
    options: { mb: { type: 'string', default: '1024' }, runs: { type: 'string', default: '3' } },
  });
  const mb = Number(values.mb);
  const runs = Number(values.runs);
  const bytes = mb * 1024 * 1024;
  const s3 = await startBenchS3();
  const file = path.join(s3.dir, 'object.bin');
  try {
    await randomFile(file, bytes);
    const { putObject, closeS3Client } = await import('@/lib/storage/s3');
    const { hashObject, hashObjectRanged } = await import('@/lib/ingest/verify');
    await putObject({
      bucket: 'bench-raw',
      key: 'bench/object.bin',
      body: createReadStream(file),
      contentLength: bytes,
    });

    const streamed = await best(runs, () => hashObject('bench-raw', 'bench/object.bin'));
    const ranged = await best(runs, () => hashObjectRanged('bench-raw', 'bench/object.bin'));
    const sum = await best(runs, async () => execFileSync('sha256sum', [file], { encoding: 'utf8' }).split(' ')[0]!);
    const local = await best(runs, async () => {
      const h = createHash('sha256');
      for await (const c of createReadStream(file, { highWaterMark: 4 * 1024 * 1024 })) h.update(c as Buffer);
      return h.digest('hex');
    });
    if (
      ranged.value.sha256 !== sum.value ||
      streamed.value.sha256 !== sum.value ||
      local.value !== sum.value ||
      streamed.value.bytes !== bytes
    ) {
      throw new Error(
        `checksums disagree: ranged ${streamed.value.sha256}, sha256sum ${sum.value}, local ${local.value}`,
      );
    }
    closeS3Client();
    const rate = (ms: number) => bytes / 1024 / 1024 / (ms / 1000);
    const rows = [
      ['S3 one GET stream + node:crypto (ingest)', streamed.ms],
      ['S3 4 ranged GETs + node:crypto', ranged.ms],
      ['sha256sum (local file)', sum.ms],
      ['node:crypto (local file)', local.ms],
    ] as const;
    console.log(`N3 server-side SHA-256, ${mb} MiB object, best of ${runs} (same bytes, all checksums equal)`);
    console.log('method                                   time s    MiB/s   speed vs sha256sum');
    for (const [name, ms] of rows) {
      console.log(
        `${name.padEnd(40)} ${(ms / 1000).toFixed(2).padStart(6)} ${rate(ms).toFixed(0).padStart(8)}   ${(sum.ms / ms).toFixed(2).padStart(6)}`,
      );
    }
    const ratio = sum.ms / streamed.ms;
    console.log(
      `N3 ratio (ingest speed / sha256sum speed) = ${ratio.toFixed(2)}  target ≥ 0.80  ${ratio >= 0.8 ? 'MET' : 'NOT MET'}`,
    );
  } finally {
    await s3.stop();
  }
}

if (process.argv[1] && path.resolve(process.argv[1]) === path.resolve(import.meta.filename)) {
  main().catch((err) => {
    console.error(`n3-sha256: ${(err as Error).stack ?? err}`);
    process.exit(1);
  });
}
