'use client';
// The bench's web worker from React: one request in flight at a time; while it runs, only the newest control state
// waits (older ones are dropped), so a dragged slider never builds a queue and the page never blocks.
import { useCallback, useEffect, useRef, useState } from 'react';
import type { DetectorCalibration } from '@/reduction/formats';
import type { BenchWorkerReply, BenchWorkerRequest } from './bench.worker';
import { type BenchAnswer, BenchChannel } from './channel';
import type { BenchFrame, BenchOutput, BenchRequest } from './compute';
import type { BenchTool, ToolAnswer, ToolInput } from './tools';

export type { BenchAnswer };

function makeWorker(): Worker {
  return new Worker(new URL('./bench.worker.ts', import.meta.url), { type: 'module' });
}

/** The live bench: load a frame, then `request(state)` on every control change. */
export function useBenchWorker() {
  const channel = useRef<BenchChannel | null>(null);
  const [answer, setAnswer] = useState<BenchAnswer | null>(null);
  const [error, setError] = useState<string | null>(null);
  const [busy, setBusy] = useState(false);
  const [loaded, setLoaded] = useState(false);

  useEffect(() => {
    const c = new BenchChannel(
      makeWorker(),
      (a) => {
        setAnswer(a);
        setError(null);
      },
      setError,
      setBusy,
    );
    channel.current = c;
    return () => {
      c.close();
      channel.current = null;
    };
  }, []);

  const load = useCallback((frame: BenchFrame) => {
    if (!channel.current) return;
    channel.current.load(frame);
    setLoaded(true);
  }, []);

  const request = useCallback((req: BenchRequest) => channel.current?.request(req), []);

  return { load, request, answer, error, busy, loaded };
}

/** A worker of its own for trials over many frames (the live bench stays responsive meanwhile). */
export function createTrialRunner() {
  const w = makeWorker();
  let id = 0;
  // biome-ignore lint/suspicious/noExplicitAny: one map for both answer kinds, typed by the method that asked
  const waiting = new Map<number, { resolve: (o: any) => void; reject: (e: Error) => void }>();
  w.onmessage = (e: MessageEvent<BenchWorkerReply>) => {
    const m = e.data;
    const p = waiting.get(m.id);
    if (!p) return;
    waiting.delete(m.id);
    if (m.type === 'result') p.resolve(m.output);
    else if (m.type === 'tool') p.resolve(m.answer);
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
    tool(
      frame: BenchFrame,
      calibration: DetectorCalibration,
      tool: BenchTool,
      ringPx: number | null = null,
      input: ToolInput = {},
    ): Promise<ToolAnswer> {
      id += 1;
      const my = id;
      return new Promise<ToolAnswer>((resolve, reject) => {
        waiting.set(my, { resolve, reject });
        w.postMessage({ type: 'tool', id: my, frame, calibration, tool, ringPx, input } satisfies BenchWorkerRequest);
      });
    },
    close() {
      w.terminate();
      for (const p of waiting.values()) p.reject(new Error('The trial was stopped.'));
      waiting.clear();
    },
  };
}
