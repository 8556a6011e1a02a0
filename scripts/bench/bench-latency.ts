/**
 * BENCH (C7, issue 15): update latency of the calibration bench and the time of a campaign trial, in Debian's
 * Chromium (CHROMIUM_PATH, default /usr/bin/chromium) through Playwright.
 *
 *   tsx scripts/bench/bench-latency.ts [--changes 60] [--scans 20] [--steps 5]
 *
 * Bundles the bench's own web worker (components/bench/bench.worker.ts) and a page script
 * (scripts/bench/browser/bench-page.ts) that drives it through the page's coalescing channel
 * (components/bench/channel.ts) with a synthetic 512 × 512 frame of the forward model. Latency = a control change
 * (the centre moved by 0.1 px) → the answer's calibrated image painted on a canvas and the next animation frame:
 *   - one change at a time (each waits for its frame): p50 / p95 at the 256 × 256 preview (2 × 2 blocks of 512²),
 *     and at full resolution 512² for comparison;
 *   - a dragged slider (a change every 16 ms for `changes` changes): p50 / p95 of the frames that were drawn, and
 *     how many intermediate states the channel skipped.
 * Goal (issue 15): a control change reaches the screen within 150 ms at 256 × 256.
 * Trial: `scans` scans of `steps` steps of 512² reduced one frame after the other at full resolution without
 * resampling, the way the bench's what-would-change list reduces a campaign (frames made in the page beforehand,
 * the raw-frame downloads are not included).
 */
import http from 'node:http';
import path from 'node:path';
import { parseArgs } from 'node:util';
import { chromium } from '@playwright/test';
import { build } from 'esbuild';
import { freePort } from './n3-sha256';

const ROOT = path.resolve(import.meta.dirname, '..', '..');

function pct(xs: number[], p: number): number {
  const s = [...xs].sort((a, b) => a - b);
  if (!s.length) return Number.NaN;
  return s[Math.min(s.length - 1, Math.max(0, Math.ceil((p / 100) * s.length) - 1))]!;
}

async function bundle(entry: string): Promise<string> {
  const r = await build({
    entryPoints: [path.join(ROOT, entry)],
    bundle: true,
    format: 'iife',
    write: false,
    platform: 'browser',
    target: 'chrome120',
    tsconfig: path.join(ROOT, 'tsconfig.json'),
    logLevel: 'error',
  });
  return r.outputFiles[0]!.text;
}

async function main(): Promise<void> {
  const { values } = parseArgs({
    options: {
      changes: { type: 'string', default: '60' },
      scans: { type: 'string', default: '20' },
      steps: { type: 'string', default: '5' },
    },
  });
  const changes = Number(values.changes);
  const [workerJs, pageJs] = await Promise.all([
    bundle('components/bench/bench.worker.ts'),
    bundle('scripts/bench/browser/bench-page.ts'),
  ]);
  const port = await freePort();
  const server = http.createServer((req, res) => {
    const body =
      req.url === '/bench.worker.js'
        ? workerJs
        : req.url === '/page.js'
          ? pageJs
          : '<!doctype html><meta charset="utf-8"><title>bench</title><script src="/page.js"></script>';
    res.writeHead(200, { 'content-type': req.url?.endsWith('.js') ? 'text/javascript' : 'text/html' });
    res.end(body);
  });
  await new Promise<void>((r) => server.listen(port, '127.0.0.1', r));
  const browser = await chromium.launch({
    executablePath: process.env.CHROMIUM_PATH ?? '/usr/bin/chromium',
    args: ['--no-sandbox', '--disable-gpu'],
  });
  try {
    const page = await browser.newPage();
    await page.goto(`http://127.0.0.1:${port}/`);
    type Lat = { drawn: { latencyMs: number; workerMs: number }[]; dropped: number };
    const run = (o: { size: number; factor: number; changes: number; intervalMs: number }) =>
      page.evaluate((x) => (window as never as { benchLatency: (y: typeof x) => Promise<Lat> }).benchLatency(x), o);
    console.log('Calibration bench in Chromium: control change → drawn frame (ms), synthetic 512 × 512 frame');
    console.log('case                                        frames   p50 ms   p95 ms   worker p50   skipped');
    const rows: [string, Lat][] = [
      ['preview 256², one change at a time', await run({ size: 512, factor: 2, changes, intervalMs: 0 })],
      [
        'preview 256², slider dragged (16 ms)',
        await run({ size: 512, factor: 2, changes: changes * 2, intervalMs: 16 }),
      ],
      [
        'full 512², one change at a time',
        await run({ size: 512, factor: 1, changes: Math.ceil(changes / 3), intervalMs: 0 }),
      ],
    ];
    for (const [name, r] of rows) {
      const l = r.drawn.map((d) => d.latencyMs);
      const w = r.drawn.map((d) => d.workerMs);
      console.log(
        `${name.padEnd(42)} ${String(l.length).padStart(6)} ${pct(l, 50).toFixed(0).padStart(8)} ${pct(l, 95).toFixed(0).padStart(8)} ${pct(w, 50).toFixed(0).padStart(12)} ${String(r.dropped).padStart(9)}`,
      );
    }
    const p95 = pct(
      rows[0]![1].drawn.map((d) => d.latencyMs),
      95,
    );
    console.log(
      `BENCH latency p95 at 256² (one change at a time) = ${p95.toFixed(0)} ms  goal ≤ 150 ms  ${p95 <= 150 ? 'MET' : 'NOT MET'}`,
    );
    const scans = Number(values.scans);
    const steps = Number(values.steps);
    const t = (await page.evaluate(
      (x) =>
        (window as never as { benchTrial: (y: typeof x) => Promise<{ ms: number; frames: number }> }).benchTrial(x),
      { scans, steps, size: 512 },
    )) as { ms: number; frames: number };
    console.log(
      `BENCH trial of a ${scans}-scan campaign (${t.frames} frames of 512², full resolution, no resampling): ${(t.ms / 1000).toFixed(1)} s, ${(t.ms / t.frames).toFixed(0)} ms per frame`,
    );
  } finally {
    await browser.close();
    server.close();
  }
}

main().catch((err) => {
  console.error(`bench-latency: ${(err as Error).stack ?? err}`);
  process.exit(1);
});
