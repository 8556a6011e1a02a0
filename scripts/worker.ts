// `npm run worker`: one reduction worker process. Run as many as you like, on this or other machines, against the
// same MariaDB, Redis and S3 (the environment of lib/env.ts). Stops cleanly on SIGINT/SIGTERM after the running job.
//
//   tsx scripts/worker.ts [--concurrency N]
// Reads `.env` from the repo root for variables not already set (skipped when LOBELINE_INSTANCE=test).
import { existsSync, readFileSync } from 'node:fs';
import { hostname } from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { parseArgs, parseEnv as parseDotEnv } from 'node:util';

const REPO_ROOT = path.resolve(fileURLToPath(new URL('..', import.meta.url)));

function loadDotEnv(): void {
  if (process.env.LOBELINE_INSTANCE === 'test') return;
  const file = path.join(REPO_ROOT, '.env');
  if (!existsSync(file)) return;
  for (const [k, v] of Object.entries(parseDotEnv(readFileSync(file, 'utf8')))) {
    if (process.env[k] === undefined) process.env[k] = v;
  }
}

async function main(): Promise<number> {
  const { values } = parseArgs({ options: { concurrency: { type: 'string' } } });
  const concurrency = values.concurrency === undefined ? 1 : Number(values.concurrency);
  if (!Number.isInteger(concurrency) || concurrency < 1 || concurrency > 16) {
    console.error('--concurrency must be a whole number from 1 to 16');
    return 2;
  }
  loadDotEnv();
  // the upload verification uses the data layer, which imports 'server-only' (see server-only-shim.ts)
  await import('./server-only-shim');
  const { EnvError, getEnv } = await import('@/lib/env');
  try {
    getEnv();
  } catch (err) {
    if (err instanceof EnvError) {
      console.error(err.message);
      return 2;
    }
    throw err;
  }
  const { startReductionWorker } = await import('@/lib/jobs/worker');
  const { startUploadVerifyWorker } = await import('@/lib/jobs/verify-upload');
  const { closeSequelize } = await import('@/lib/db');
  const { closeS3Client } = await import('@/lib/storage/s3');
  const { closeMailTransport } = await import('@/lib/mail/transport');
  const { log } = await import('@/lib/log');
  const name = `${hostname()}:${process.pid}`;
  const { worker, close } = startReductionWorker({ concurrency, name });
  // Large uploads are verified here too, off the web server's request path.
  const verify = startUploadVerifyWorker({ name });
  // Archive and restore moves, and the scheduled fixity checks (C10, issue 14).
  const { startArchiveWorker } = await import('@/lib/jobs/archive');
  const { startFixityWorker } = await import('@/lib/jobs/fixity');
  const archive = startArchiveWorker({ name });
  const fixity = startFixityWorker({ name });
  // Chunk jobs of large event files (lib/queue/event-flow.ts), as many at once as reductions.
  const { startEventChunkWorker } = await import('@/lib/jobs/event-chunk');
  const chunks = startEventChunkWorker({ concurrency, name });
  // Model overlays of the comparison page that take long (the ensemble), one at a time.
  const { startModelWorker } = await import('@/lib/jobs/model-job');
  const models = startModelWorker({ name });
  await Promise.all([
    worker.waitUntilReady(),
    models.worker.waitUntilReady(),
    verify.worker.waitUntilReady(),
    archive.worker.waitUntilReady(),
    fixity.worker.waitUntilReady(),
    chunks.worker.waitUntilReady(),
  ]);
  log.info('reduction worker ready', { name, concurrency });
  console.log(`Lobeline reduction worker ${name} is waiting for jobs (concurrency ${concurrency}). Ctrl-C stops it.`);
  await new Promise<void>((resolve) => {
    let stopping = false;
    const stop = (signal: string) => {
      if (stopping) return;
      stopping = true;
      console.log(`${signal}: finishing the running job, then stopping…`);
      resolve();
    };
    process.once('SIGINT', () => stop('SIGINT'));
    process.once('SIGTERM', () => stop('SIGTERM'));
  });
  await Promise.all([close(), verify.close(), archive.close(), fixity.close(), chunks.close(), models.close()]);
  const { closeFixityQueue } = await import('@/lib/jobs/fixity');
  const { closeArchiveQueue } = await import('@/lib/jobs/archive');
  await Promise.all([closeFixityQueue(), closeArchiveQueue()]);
  await closeSequelize();
  closeS3Client();
  closeMailTransport();
  return 0;
}

main().then(
  (code) => process.exit(code),
  (err) => {
    console.error(err);
    process.exit(1);
  },
);
