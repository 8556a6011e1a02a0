// Talks to precheck.worker.ts: one worker opens files with the scan-file reader, another hashes them, so a long
// hash never delays the next file's pre-check. Browser only.
import type { PrecheckResult, WorkerReply, WorkerRequest } from './precheck-protocol';

type Pending = {
  resolve: (v: never) => void;
  reject: (e: Error) => void;
  onProgress?: (bytes: number) => void;
};

class WorkerChannel {
  private worker: Worker | null = null;
  private nextId = 1;
  private readonly pending = new Map<number, Pending>();

  private get(): Worker {
    if (!this.worker) {
      this.worker = new Worker(new URL('./precheck.worker.ts', import.meta.url), { type: 'module' });
      this.worker.onmessage = (ev: MessageEvent<WorkerReply>) => this.receive(ev.data);
      this.worker.onerror = (ev) => {
        for (const p of this.pending.values()) p.reject(new Error(ev.message || 'The file checker stopped.'));
        this.pending.clear();
        this.worker?.terminate();
        this.worker = null;
      };
    }
    return this.worker;
  }

  private receive(msg: WorkerReply): void {
    const p = this.pending.get(msg.id);
    if (!p) return;
    if (msg.op === 'hash-progress') {
      p.onProgress?.(msg.bytes);
      return;
    }
    this.pending.delete(msg.id);
    if (msg.op === 'error') p.reject(new Error(msg.message));
    else if (msg.op === 'precheck') (p.resolve as (v: PrecheckResult) => void)(msg.result);
    else (p.resolve as (v: string) => void)(msg.sha256);
  }

  send<T>(req: Omit<WorkerRequest, 'id'>, onProgress?: (bytes: number) => void): Promise<T> {
    const id = this.nextId++;
    return new Promise<T>((resolve, reject) => {
      this.pending.set(id, { resolve: resolve as (v: never) => void, reject, onProgress });
      this.get().postMessage({ ...req, id } as WorkerRequest);
    });
  }

  terminate(): void {
    this.worker?.terminate();
    this.worker = null;
  }
}

export class FileChecker {
  private readonly reader = new WorkerChannel();
  private readonly hasher = new WorkerChannel();

  precheck(file: File): Promise<PrecheckResult> {
    return this.reader.send<PrecheckResult>({ op: 'precheck', file });
  }

  sha256(file: File, onProgress?: (bytes: number) => void): Promise<string> {
    return this.hasher.send<string>({ op: 'hash', file }, onProgress);
  }

  terminate(): void {
    this.reader.terminate();
    this.hasher.terminate();
  }
}
