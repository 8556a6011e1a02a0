/**
 * N3 (browser side): SHA-256 of a dropped file in Chromium's web worker, the TypeScript hasher against the
 * WebAssembly one (lib/ingest/file-hash.ts, hash-wasm), and Debian's `sha256sum` on the same file in the same run.
 * README N3: browser hashing should reach at least half of sha256sum's speed.
 *
 *   tsx scripts/bench/n3-browser-sha256.ts [--mb 200] [--runs 2]
 *
 * Bundles scripts/bench/browser/hash-worker.ts with esbuild, serves it on a free loopback port, opens it in
 * /usr/bin/chromium (CHROMIUM_PATH) through Playwright, hands it the file through a file input (the same path as
 * a drop) and takes the best of `runs` per engine. All three checksums must agree. Cleans up.
 */
import { execFileSync } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import http from 'node:http';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { parseArgs } from 'node:util';
import { chromium } from '@playwright/test';
import { build } from 'esbuild';
import { freePort, randomFile } from './n3-sha256';

const ROOT = path.resolve(import.meta.dirname, '..', '..');

const PAGE = `<!doctype html><meta charset="utf-8"><title>hash bench</title><input type="file" id="f">
<script>
window.hashWith = (engine) => new Promise((resolve, reject) => {
  const w = new Worker('/worker.js');
  w.onmessage = (e) => { w.terminate(); resolve(e.data); };
  w.onerror = (e) => reject(new Error(e.message));
  w.postMessage({ file: document.getElementById('f').files[0], engine });
});
</script>`;

async function main(): Promise<void> {
  const { values } = parseArgs({
    options: { mb: { type: 'string', default: '200' }, runs: { type: 'string', default: '2' } },
  });
  const mb = Number(values.mb);
  const runs = Number(values.runs);
  const bytes = mb * 1024 * 1024;
  const dir = mkdtempSync(path.join(tmpdir(), 'lobeline-bench-hash-'));
  const file = path.join(dir, 'drop.bin');
  const bundled = await build({
    entryPoints: [path.join(ROOT, 'scripts/bench/browser/hash-worker.ts')],
    bundle: true,
    format: 'iife',
    write: false,
    platform: 'browser',
    target: 'chrome120',
    tsconfig: path.join(ROOT, 'tsconfig.json'),
  });
  const workerJs = bundled.outputFiles[0]!.text;
  const port = await freePort();
  const server = http.createServer((req, res) => {
    const js = req.url === '/worker.js';
    // the policy the app's pages get for WebAssembly: compiling is allowed, eval is not
    res.writeHead(200, {
      'content-type': js ? 'text/javascript' : 'text/html',
      'content-security-policy': "default-src 'self'; script-src 'self' 'unsafe-inline' 'wasm-unsafe-eval'",
    });
    res.end(js ? workerJs : PAGE);
  });
  await new Promise<void>((r) => server.listen(port, '127.0.0.1', r));
  const browser = await chromium.launch({ executablePath: process.env.CHROMIUM_PATH ?? '/usr/bin/chromium' });
  try {
    await randomFile(file, bytes);
    const page = await browser.newPage();
    await page.goto(`http://127.0.0.1:${port}/`);
    await page.setInputFiles('#f', file);
    const results: Record<string, { ms: number; sha256: string; engine: string }> = {};
    for (const engine of ['js', 'wasm'] as const) {
      for (let i = 0; i < runs; i++) {
        const r = (await page.evaluate(
          (e) => (window as never as { hashWith: (x: string) => unknown }).hashWith(e),
          engine,
        )) as {
          ms: number;
          sha256: string;
          engine: string;
        };
        if (r.engine !== engine) throw new Error(`asked for ${engine}, the worker hashed with ${r.engine}`);
        if (!results[engine] || r.ms < results[engine].ms) results[engine] = r;
      }
    }
    let sumMs = Number.POSITIVE_INFINITY;
    let sum = '';
    for (let i = 0; i < runs; i++) {
      const t0 = performance.now();
      sum = execFileSync('sha256sum', [file], { encoding: 'utf8' }).split(' ')[0]!;
      sumMs = Math.min(sumMs, performance.now() - t0);
    }
    if (results.js!.sha256 !== sum || results.wasm!.sha256 !== sum) {
      throw new Error(`checksums disagree: js ${results.js!.sha256}, wasm ${results.wasm!.sha256}, sha256sum ${sum}`);
    }
    const rate = (ms: number) => bytes / 1024 / 1024 / (ms / 1000);
    console.log(`N3 browser SHA-256 in a Chromium web worker, ${mb} MiB file, best of ${runs} (all checksums equal)`);
    console.log('method                                   time s    MiB/s   speed vs sha256sum');
    const rows = [
      ['Chromium worker, TypeScript (before)', results.js!.ms],
      ['Chromium worker, hash-wasm (now)', results.wasm!.ms],
      ['sha256sum (same file)', sumMs],
    ] as const;
    for (const [name, ms] of rows) {
      console.log(
        `${name.padEnd(40)} ${(ms / 1000).toFixed(2).padStart(6)} ${rate(ms).toFixed(0).padStart(8)}   ${(sumMs / ms).toFixed(2).padStart(6)}`,
      );
    }
    const ratio = sumMs / results.wasm!.ms;
    console.log(
      `N3 browser ratio (hash-wasm speed / sha256sum speed) = ${ratio.toFixed(2)}  target ≥ 0.50  ${ratio >= 0.5 ? 'MET' : 'NOT MET'}`,
    );
  } finally {
    await browser.close();
    server.close();
    rmSync(dir, { recursive: true, force: true });
  }
}

main().catch((err) => {
  console.error(`n3-browser-sha256: ${(err as Error).stack ?? err}`);
  process.exit(1);
});
