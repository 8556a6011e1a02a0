'use client';
// The bench's web worker from React: one request in flight at a time; while it runs, only the newest control state
// waits (older ones are dropped), so a dragged slider never builds a queue and the page never blocks.
import { useCallback, useEffect, useRef, useState } from 'react';
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

function makeWorker(): Worker {
  return new Worker(new URL('./bench.worker.ts', import.meta.url), { type: 'module' });
}

/** The live bench: load a frame, then `request(state)` on every control change. */
export function useBenchWorker() {
  const workerRef = useRef<Worker | null>(null);
  const inFlight = useRef<{ seq: number; changedAt: number } | null>(null);
  const pending = useRef<{ req: BenchRequest; changedAt: number } | null>(null);
  const seqRef = useRef(0);
  const [answer, setAnswer] = useState<BenchAnswer | null>(null);
  const [error, setError] = useState<string | null>(null);
  const [busy, setBusy] = useState(false);
  const [loaded, setLoaded] = useState(false);

  const send = useCallback((req: BenchRequest, changedAt: number) => {
    const w = workerRef.current;
    if (!w) return;
    seqRef.current += 1;
    inFlight.current = { seq: seqRef.current, changedAt };
    setBusy(true);
    w.postMessage({ type: 'compute', id: seqRef.current, req } satisfies BenchWorkerRequest);
  }, []);

  useEffect(() => {
    const w = makeWorker();
    workerRef.current = w;
    w.onmessage = (e: MessageEvent<BenchWorkerReply>) => {
      const m = e.data;
      const sent = inFlight.current;
      inFlight.current = null;
      if (m.type === 'result') {
        setAnswer({ output: m.output, ms: m.ms, seq: m.id, changedAt: sent?.changedAt ?? performance.now() });
        setError(null);
      } else {
        setError(m.message);
      }
      const next = pending.current;
      pending.current = null;
      if (next) send(next.req, next.changedAt);
      else setBusy(false);
    };
    w.onerror = (e) => {
      inFlight.current = null;
      setBusy(false);
      setError(e.message || 'The bench worker stopped.');
    };
    return () => {
      w.terminate();
      workerRef.current = null;
    };
  }, [send]);

  const load = useCallback((frame: BenchFrame) => {
    const w = workerRef.current;
    if (!w) return;
    // a copy goes to the worker; the page keeps its own for the detector view
    w.postMessage({ type: 'load', frame } satisfies BenchWorkerRequest);
    setLoaded(true);
  }, []);

  const request = useCallback(
    (req: BenchRequest) => {
      const changedAt = performance.now();
      if (inFlight.current) pending.current = { req, changedAt };
      else send(req, changedAt);
    },
    [send],
  );

  return { load, request, answer, error, busy, loaded };
}

/** A worker of its own for trials over many frames (the live bench stays responsive meanwhile). */
export function createTrialRunner() {
  const w = makeWorker();
  let id = 0;
  const waiting = new Map<number, { resolve: (o: BenchOutput) => void; reject: (e: Error) => void }>();
  w.onmessage = (e: MessageEvent<BenchWorkerReply>) => {
    const m = e.data;
    const p = waiting.get(m.id);
    if (!p) return;
    waiting.delete(m.id);
    if (m.type === 'result') p.resolve(m.output);
    else p.reject(new Error(m.message));
  };
  return {
    run(frame: BenchFrame, req: BenchRequest): Promise<BenchOutput> {
      id += 1;
      const my = id;
      return new Promise<BenchOutput>((resolve, reject) => {
        waiting.set(my, { resolve, reject });
        w.postMessage({ type: 'trial', id: my, frame, req } satisfies BenchWorkerRequest);
      });
    },
    close() {
      w.terminate();
      for (const p of waiting.values()) p.reject(new Error('The trial was stopped.'));
      waiting.clear();
    },
  };
}
