/**
 * Shared helpers for `npm run bench`: medians of repetitions, table rows, the bench data folder.
 */
import { mkdirSync } from 'node:fs';
import path from 'node:path';

export const BENCH_DIR = path.resolve(import.meta.dirname, '../../tests/fixtures/generated/bench');
mkdirSync(BENCH_DIR, { recursive: true });

/** Runs `fn` `reps` times (after one warm-up unless `warmup` is false) and returns the times in ms. */
export function timeRuns(reps: number, fn: () => void, warmup = true): number[] {
  if (warmup) fn();
  const t: number[] = [];
  for (let i = 0; i < reps; i++) {
    const t0 = performance.now();
    fn();
    t.push(performance.now() - t0);
  }
  return t;
}

export function median(xs: number[]): number {
  const s = [...xs].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? (s[m] as number) : ((s[m - 1] as number) + (s[m] as number)) / 2;
}

export function row(label: string, ms: number, note = ''): string {
  return `  ${label.padEnd(58)} ${ms.toFixed(1).padStart(9)} ms  ${note}`.trimEnd();
}
