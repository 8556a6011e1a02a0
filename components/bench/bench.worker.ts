// The calibration bench's web worker: holds the raw frame of the bench and reduces it with each calibration the
// page sends (compute.ts, the server's reducer). The page sends a new request only when the previous answer has
// arrived (use-bench-worker.ts keeps just the latest pending state), so nothing queues up here.
import type { DetectorCalibration } from '@/reduction/formats';
import { type BenchFrame, type BenchOutput, type BenchRequest, computeBench } from './compute';
import { type BenchTool, runTool, type ToolAnswer, type ToolInput } from './tools';

export type BenchWorkerRequest =
  | { type: 'load'; frame: BenchFrame }
  | { type: 'compute'; id: number; req: BenchRequest }
  | { type: 'trial'; id: number; frame: BenchFrame; req: BenchRequest }
  | {
      type: 'tool';
      id: number;
      frame: BenchFrame;
      calibration: DetectorCalibration;
      tool: BenchTool;
      ringPx?: number | null;
      input?: ToolInput;
    };

export type BenchWorkerReply =
  | { type: 'result'; id: number; output: BenchOutput; ms: number }
  | { type: 'tool'; id: number; answer: ToolAnswer; ms: number }
  | { type: 'error'; id: number; message: string };

let current: BenchFrame | null = null;

function run(id: number, frame: BenchFrame, req: BenchRequest): void {
  const t0 = performance.now();
  try {
    const output = computeBench(frame, req);
    const reply: BenchWorkerReply = { type: 'result', id, output, ms: performance.now() - t0 };
    postMessage(reply, {
      transfer: [output.image.buffer, output.angular.buffer, output.radial.buffer, output.dNdE.buffer],
    });
  } catch (err) {
    const reply: BenchWorkerReply = { type: 'error', id, message: (err as Error).message };
    postMessage(reply);
  }
}

addEventListener('message', (e: MessageEvent<BenchWorkerRequest>) => {
  const m = e.data;
  if (m.type === 'load') {
    current = m.frame;
  } else if (m.type === 'compute') {
    if (!current) {
      postMessage({ type: 'error', id: m.id, message: 'No frame is loaded yet.' } satisfies BenchWorkerReply);
      return;
    }
    run(m.id, current, m.req);
  } else if (m.type === 'trial') {
    run(m.id, m.frame, m.req);
  } else if (m.type === 'tool') {
    const t0 = performance.now();
    try {
      const answer = runTool(m.frame, m.calibration, m.tool, m.ringPx ?? null, m.input ?? {});
      postMessage({ type: 'tool', id: m.id, answer, ms: performance.now() - t0 } satisfies BenchWorkerReply);
    } catch (err) {
      postMessage({ type: 'error', id: m.id, message: (err as Error).message } satisfies BenchWorkerReply);
    }
  }
});
