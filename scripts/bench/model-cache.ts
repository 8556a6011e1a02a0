// MODELS-CACHE (issue 13): how fast a model overlay is answered from the MariaDB cache (lib/comparison/model-cache.ts)
// against computing it, side by side in one run.
//
//   tsx scripts/bench/model-cache.ts [--requests 200]
//
// The parameter set is new on every run (an intensity list of its own), so the first request computes the
// Coulomb-corrected trajectory line for 20 intensities (He, 800 nm, ε = 0.87) and stores it; the following requests
// are answered by one indexed row read by the SHA-256 of the canonical parameters — the path a comparison page takes
// for every model it shows. The database is the one of the environment (the app's .env). The bench's rows are
// removed at the end.
import { spawnSync } from 'node:child_process';
import { existsSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { parseArgs, parseEnv as parseDotEnv } from 'node:util';

const SELF = fileURLToPath(import.meta.url);
const REPO = path.resolve(path.dirname(SELF), '../..');

// The data layer imports 'server-only'; this Node process resolves it to an empty module (see server-only-shim.ts).
if (process.env.LOBELINE_MODEL_CACHE_CHILD !== '1') {
  const r = spawnSync(process.execPath, ['--import', 'tsx', SELF, ...process.argv.slice(2)], {
    stdio: 'inherit',
    env: { ...process.env, LOBELINE_MODEL_CACHE_CHILD: '1' },
    cwd: REPO,
  });
  process.exit(r.status ?? 1);
}
await import('../server-only-shim');

function loadDotEnv(): void {
  if (process.env.LOBELINE_INSTANCE === 'test') return;
  const file = path.join(REPO, '.env');
  if (!existsSync(file)) return;
  for (const [k, v] of Object.entries(parseDotEnv(readFileSync(file, 'utf8')))) {
    if (process.env[k] === undefined) process.env[k] = v;
  }
}

function percentile(sorted: number[], p: number): number {
  const i = Math.min(sorted.length - 1, Math.max(0, Math.ceil((p / 100) * sorted.length) - 1));
  return sorted[i] as number;
}

async function main(): Promise<number> {
  const { values } = parseArgs({ options: { requests: { type: 'string' } } });
  const requests = Math.max(20, Math.min(5000, Number(values.requests ?? 200)));
  loadDotEnv();
  const { modelCurvesCached, modelParamHash } = await import('@/lib/comparison/model-cache');
  const { closeSequelize } = await import('@/lib/db/client');
  const { ModelCacheEntry } = await import('@/models');
  const { getDb } = await import('@/lib/db');
  getDb(); // connects and initialises the models

  // 20 intensities 1–8 × 10¹⁴ W/cm², nudged by a run-specific factor so that this run's parameter set is new
  const nudge = 1 + (Date.now() % 1_000_000) * 1e-12;
  const intensitiesWcm2 = Array.from({ length: 20 }, (_, k) => 1e14 * 8 ** (k / 19) * nudge);
  const req = { target: 'He', wavelengthNm: 800, ellipticity: 0.87, intensitiesWcm2 };
  const hash = modelParamHash('trajectory', { ...req });
  try {
    // the connection itself is opened before the clock starts (a miss on a hash no model has)
    await ModelCacheEntry.findOne({ where: { param_hash: '0'.repeat(64) } });
    const t0 = performance.now();
    const [first] = await modelCurvesCached(req, ['trajectory']);
    const computeMs = performance.now() - t0;
    if (!first || first.cached) throw new Error('the first request should have computed the line');
    // warm-up of the connection pool and the statement path
    for (let i = 0; i < 10; i++) await modelCurvesCached(req, ['trajectory']);
    const times: number[] = [];
    for (let i = 0; i < requests; i++) {
      const t = performance.now();
      const [c] = await modelCurvesCached(req, ['trajectory']);
      times.push(performance.now() - t);
      if (!c?.cached) throw new Error('a repeated request was not answered from the cache');
    }
    times.sort((a, b) => a - b);
    const p50 = percentile(times, 50);
    console.log(`  trajectory line, 20 intensities: computed and stored   ${computeMs.toFixed(1).padStart(8)} ms`);
    console.log(
      `  the same from the MariaDB cache (${requests} requests)       p50 ${p50.toFixed(2)} ms, p95 ${percentile(times, 95).toFixed(2)} ms, ${(computeMs / p50).toFixed(0)} × faster`,
    );
    return 0;
  } finally {
    await ModelCacheEntry.destroy({ where: { param_hash: hash } }).catch(() => undefined);
    await closeSequelize();
  }
}

main().then(
  (c) => process.exit(c),
  (err) => {
    console.error(err);
    process.exit(1);
  },
);
