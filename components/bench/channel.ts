// The coalescing channel between the bench page and its web worker (no React, so the browser bench
// scripts/bench/bench-latency.ts drives the same code as the page).
import type { BenchWorkerReply, BenchWorkerRequest } from './bench.worker';
import type { BenchFrame, BenchOutput, BenchRequest } from './compute';

export interface BenchAnswer {
  output: BenchOutput;
  /** Compute time in the worker, ms. */
  ms: number;
  /** Request sequence number the answer belongs to (latest sent = newest state). */
  seq: number;
  /** performance.now() when the control change behind this answer happened. */
  changedAt: number;
}

/**
 * The coalescing channel to a bench worker (no React): `request` sends at once when the worker is idle, else
 * replaces the one waiting state; each answer carries the time of the control change behind it.
 */
export class BenchChannel {
  private inFlight: { seq: number; changedAt: number } | null = null;
  private pending: { req: BenchRequest; changedAt: number } | null = null;
  private seq = 0;
  /** Requests replaced by a newer one before they were sent. */
  dropped = 0;

  constructor(
    private readonly worker: Worker,
    private readonly onAnswer: (a: BenchAnswer) => void,
    private readonly onError: (message: string) => void,
    private readonly onBusy: (busy: boolean) => void = () => undefined,
  ) {
    worker.onmessage = (e: MessageEvent<BenchWorkerReply>) => {
      const m = e.data;
      const sent = this.inFlight;
      this.inFlight = null;
      if (m.type === 'tool') return;
      if (m.type === 'result') {
        this.onAnswer({ output: m.output, ms: m.ms, seq: m.id, changedAt: sent?.changedAt ?? performance.now() });
      } else {
        this.onError(m.message);
      }
      const next = this.pending;
      this.pending = null;
      if (next) this.send(next.req, next.changedAt);
      else this.onBusy(false);
    };
    worker.onerror = (e) => {
      this.inFlight = null;
      this.onBusy(false);
      this.onError(e.message || 'The bench worker stopped.');
    };
  }

  private send(req: BenchRequest, changedAt: number): void {
    this.seq += 1;
    this.inFlight = { seq: this.seq, changedAt };
    this.onBusy(true);
    this.worker.postMessage({ type: 'compute', id: this.seq, req } satisfies BenchWorkerRequest);
  }

  load(frame: BenchFrame): void {
    this.worker.postMessage({ type: 'load', frame } satisfies BenchWorkerRequest);
  }

  request(req: BenchRequest, changedAt = performance.now()): void {
    if (this.inFlight) {
      if (this.pending) this.dropped += 1;
      this.pending = { req, changedAt };
    } else {
      this.send(req, changedAt);
    }
  }

  close(): void {
    this.worker.terminate();
  }
}
